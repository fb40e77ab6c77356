ALTER TABLE `runs` ADD `n_assets` integer;--> statement-breakpoint
ALTER TABLE `runs` ADD `n_factors` integer;--> statement-breakpoint
ALTER TABLE `runs` ADD `n_periods` integer;--> statement-breakpoint
CREATE INDEX `runs_status_idx` ON `runs` (`status`);--> statement-breakpoint
-- Backfill from the stored result of every run written before this migration (N, K, T of the ledger).
UPDATE `runs` SET `n_assets` = json_extract(`result`, '$.N'), `n_factors` = json_extract(`result`, '$.K'), `n_periods` = json_extract(`result`, '$.T') WHERE `result` IS NOT NULL;
