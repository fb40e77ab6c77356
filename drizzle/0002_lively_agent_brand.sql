CREATE TABLE `libraries` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`description` text DEFAULT '' NOT NULL,
	`visibility` text NOT NULL,
	`owner_id` integer,
	`last_edition_number` integer DEFAULT 0 NOT NULL,
	`archived_at` text,
	`created_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	FOREIGN KEY (`owner_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `libraries_owner_idx` ON `libraries` (`owner_id`);--> statement-breakpoint
CREATE INDEX `libraries_visibility_idx` ON `libraries` (`visibility`);--> statement-breakpoint
CREATE TABLE `library_editions` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`library_id` integer NOT NULL,
	`number` integer NOT NULL,
	`frequency` text NOT NULL,
	`row_count` integer NOT NULL,
	`first_date` text NOT NULL,
	`last_date` text NOT NULL,
	`dates` text NOT NULL,
	`source_units` text NOT NULL,
	`file_name` text DEFAULT '' NOT NULL,
	`created_by` integer,
	`created_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	FOREIGN KEY (`library_id`) REFERENCES `libraries`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `library_editions_number_idx` ON `library_editions` (`library_id`,`number`);--> statement-breakpoint
CREATE TABLE `library_series` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`edition_id` integer NOT NULL,
	`position` integer NOT NULL,
	`name` text NOT NULL,
	`kind` text NOT NULL,
	`traded` integer NOT NULL,
	`values` blob NOT NULL,
	`count` integer NOT NULL,
	`missing` integer NOT NULL,
	`mean` real,
	`sd` real,
	`min` real,
	`max` real,
	FOREIGN KEY (`edition_id`) REFERENCES `library_editions`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `library_series_position_idx` ON `library_series` (`edition_id`,`position`);--> statement-breakpoint
CREATE TABLE `library_uploads` (
	`id` text PRIMARY KEY NOT NULL,
	`owner_id` integer NOT NULL,
	`file_name` text NOT NULL,
	`frequency` text NOT NULL,
	`columns` text NOT NULL,
	`dates` text NOT NULL,
	`values` blob NOT NULL,
	`preview` text NOT NULL,
	`expires_at` text NOT NULL,
	`created_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	FOREIGN KEY (`owner_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `library_uploads_owner_idx` ON `library_uploads` (`owner_id`);--> statement-breakpoint
CREATE INDEX `library_uploads_expires_idx` ON `library_uploads` (`expires_at`);