CREATE TABLE `run_seeks` (
	`id` text PRIMARY KEY NOT NULL,
	`run_id` text NOT NULL,
	`created_by` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`spec` text NOT NULL,
	`seeks` text NOT NULL,
	`error` text,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `run_seeks_run_idx` ON `run_seeks` (`run_id`,`created_at`);