PRAGMA foreign_keys=OFF;--> statement-breakpoint
CREATE TABLE `__new_model_specs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`author_id` integer NOT NULL,
	`edition_id` integer NOT NULL,
	`library_id` integer NOT NULL,
	`library_name` text NOT NULL,
	`edition_number` integer NOT NULL,
	`spec` text NOT NULL,
	`copied_from_id` integer,
	`archived_at` text,
	`created_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	`updated_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`edition_id`) REFERENCES `library_editions`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
INSERT INTO `__new_model_specs`("id", "name", "author_id", "edition_id", "library_id", "library_name", "edition_number", "spec", "copied_from_id", "archived_at", "created_at", "updated_at") SELECT "id", "name", "author_id", "edition_id", "library_id", "library_name", "edition_number", "spec", "copied_from_id", "archived_at", "created_at", "updated_at" FROM `model_specs`;--> statement-breakpoint
DROP TABLE `model_specs`;--> statement-breakpoint
ALTER TABLE `__new_model_specs` RENAME TO `model_specs`;--> statement-breakpoint
PRAGMA foreign_keys=ON;--> statement-breakpoint
CREATE INDEX `model_specs_author_idx` ON `model_specs` (`author_id`);--> statement-breakpoint
CREATE TABLE `__new_runs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`spec_id` integer,
	`spec_name` text,
	`edition_id` integer NOT NULL,
	`library_id` integer NOT NULL,
	`library_name` text NOT NULL,
	`edition_number` integer NOT NULL,
	`spec` text NOT NULL,
	`keelson_version` text NOT NULL,
	`author_id` integer NOT NULL,
	`status` text NOT NULL,
	`error` text,
	`result` text,
	`bootstrap_job_id` integer,
	`created_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	`started_at` text,
	`finished_at` text,
	FOREIGN KEY (`spec_id`) REFERENCES `model_specs`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`edition_id`) REFERENCES `library_editions`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
INSERT INTO `__new_runs`("id", "spec_id", "spec_name", "edition_id", "library_id", "library_name", "edition_number", "spec", "keelson_version", "author_id", "status", "error", "result", "bootstrap_job_id", "created_at", "started_at", "finished_at") SELECT "id", "spec_id", "spec_name", "edition_id", "library_id", "library_name", "edition_number", "spec", "keelson_version", "author_id", "status", "error", "result", "bootstrap_job_id", "created_at", "started_at", "finished_at" FROM `runs`;--> statement-breakpoint
DROP TABLE `runs`;--> statement-breakpoint
ALTER TABLE `__new_runs` RENAME TO `runs`;--> statement-breakpoint
CREATE INDEX `runs_author_idx` ON `runs` (`author_id`);--> statement-breakpoint
CREATE INDEX `runs_spec_idx` ON `runs` (`spec_id`);--> statement-breakpoint
CREATE INDEX `runs_library_idx` ON `runs` (`library_id`);--> statement-breakpoint
CREATE TABLE `__new_jobs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`kind` text NOT NULL,
	`run_id` integer NOT NULL,
	`author_id` integer NOT NULL,
	`params` text NOT NULL,
	`status` text NOT NULL,
	`done` integer DEFAULT 0 NOT NULL,
	`total` integer DEFAULT 0 NOT NULL,
	`error` text,
	`result` text,
	`attempts` integer DEFAULT 0 NOT NULL,
	`created_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	`started_at` text,
	`finished_at` text,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
INSERT INTO `__new_jobs`("id", "kind", "run_id", "author_id", "params", "status", "done", "total", "error", "result", "attempts", "created_at", "started_at", "finished_at") SELECT "id", "kind", "run_id", "author_id", "params", "status", "done", "total", "error", "result", "attempts", "created_at", "started_at", "finished_at" FROM `jobs`;--> statement-breakpoint
DROP TABLE `jobs`;--> statement-breakpoint
ALTER TABLE `__new_jobs` RENAME TO `jobs`;--> statement-breakpoint
CREATE INDEX `jobs_run_idx` ON `jobs` (`run_id`);--> statement-breakpoint
CREATE INDEX `jobs_author_idx` ON `jobs` (`author_id`);--> statement-breakpoint
CREATE INDEX `jobs_status_idx` ON `jobs` (`status`);