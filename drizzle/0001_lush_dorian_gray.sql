CREATE TABLE `model_specs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`author_id` integer NOT NULL,
	`edition_id` integer NOT NULL,
	`library_id` integer NOT NULL,
	`library_name` text NOT NULL,
	`edition_number` integer NOT NULL,
	`spec` text NOT NULL,
	`copied_from_id` integer,
	`created_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	`updated_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `model_specs_author_idx` ON `model_specs` (`author_id`);--> statement-breakpoint
CREATE TABLE `run_comments` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`run_id` integer NOT NULL,
	`author_id` integer NOT NULL,
	`text` text NOT NULL,
	`created_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `run_comments_run_idx` ON `run_comments` (`run_id`);--> statement-breakpoint
CREATE TABLE `runs` (
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
	`created_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	`started_at` text,
	`finished_at` text,
	FOREIGN KEY (`spec_id`) REFERENCES `model_specs`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `runs_author_idx` ON `runs` (`author_id`);--> statement-breakpoint
CREATE INDEX `runs_spec_idx` ON `runs` (`spec_id`);--> statement-breakpoint
CREATE INDEX `runs_library_idx` ON `runs` (`library_id`);--> statement-breakpoint
CREATE TABLE `signoff_requests` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`run_id` integer NOT NULL,
	`reviewer_id` integer NOT NULL,
	`requested_by_id` integer NOT NULL,
	`note` text,
	`answered_at` text,
	`created_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`reviewer_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`requested_by_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `signoff_requests_reviewer_idx` ON `signoff_requests` (`reviewer_id`);--> statement-breakpoint
CREATE INDEX `signoff_requests_run_idx` ON `signoff_requests` (`run_id`);--> statement-breakpoint
CREATE TABLE `signoffs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`run_id` integer NOT NULL,
	`reviewer_id` integer NOT NULL,
	`decision` text NOT NULL,
	`note` text,
	`created_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`reviewer_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `signoffs_run_idx` ON `signoffs` (`run_id`);