CREATE TABLE `run_point_expectations` (
	`run_id` text NOT NULL,
	`point` integer NOT NULL,
	`passed` blob NOT NULL,
	`margins` blob NOT NULL,
	PRIMARY KEY(`run_id`, `point`),
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
ALTER TABLE `runs` ADD `expectations` text;--> statement-breakpoint
ALTER TABLE `runs` ADD `expectations_failing` integer;