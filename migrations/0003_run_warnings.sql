ALTER TABLE `run_points` ADD `error` text;--> statement-breakpoint
ALTER TABLE `runs` ADD `warnings` text;--> statement-breakpoint
ALTER TABLE `runs` ADD `failures` text;