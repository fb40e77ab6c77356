ALTER TABLE `model_specs` ADD `archived_at` text;--> statement-breakpoint
ALTER TABLE `runs` ADD `bootstrap_job_id` integer;