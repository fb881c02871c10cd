CREATE TABLE `commits` (
	`id` text PRIMARY KEY NOT NULL,
	`network_id` text NOT NULL,
	`parent_id` text,
	`text` text NOT NULL,
	`text_sha256` text NOT NULL,
	`message` text NOT NULL,
	`author_id` text NOT NULL,
	`ok` integer NOT NULL,
	`error_count` integer NOT NULL,
	`warning_count` integer NOT NULL,
	`diagnostics` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`network_id`) REFERENCES `networks`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `commits_network_created_idx` ON `commits` (`network_id`,`created_at`);--> statement-breakpoint
CREATE TABLE `networks` (
	`id` text PRIMARY KEY NOT NULL,
	`workspace_id` text NOT NULL,
	`slug` text NOT NULL,
	`name` text NOT NULL,
	`head_commit_id` text,
	`created_by` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`workspace_id`) REFERENCES `workspaces`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `networks_workspace_slug_idx` ON `networks` (`workspace_id`,`slug`);--> statement-breakpoint
CREATE TABLE `run_points` (
	`run_id` text NOT NULL,
	`point` integer NOT NULL,
	`sample` integer NOT NULL,
	`params` blob NOT NULL,
	`probes` blob NOT NULL,
	`method` text NOT NULL,
	`iterations` integer NOT NULL,
	`residual` real NOT NULL,
	`rails` blob NOT NULL,
	`nodes` blob NOT NULL,
	`current` blob NOT NULL,
	`ic` blob NOT NULL,
	`saturated` blob NOT NULL,
	PRIMARY KEY(`run_id`, `point`),
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `runs` (
	`id` text PRIMARY KEY NOT NULL,
	`commit_id` text NOT NULL,
	`network_id` text NOT NULL,
	`workspace_id` text NOT NULL,
	`created_by` text NOT NULL,
	`state` text DEFAULT 'queued' NOT NULL,
	`reason` text,
	`points_total` integer NOT NULL,
	`points_done` integer DEFAULT 0 NOT NULL,
	`time_limit_ms` integer NOT NULL,
	`cancel_requested` integer DEFAULT false NOT NULL,
	`layout` text,
	`model` text,
	`newton_points` integer,
	`devices_not_weak` integer,
	`devices_not_saturated` integer,
	`max_residual` real,
	`solver_reason` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`started_at` integer,
	`finished_at` integer,
	FOREIGN KEY (`commit_id`) REFERENCES `commits`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`network_id`) REFERENCES `networks`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`workspace_id`) REFERENCES `workspaces`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `runs_commit_created_idx` ON `runs` (`commit_id`,`created_at`);--> statement-breakpoint
CREATE INDEX `runs_state_idx` ON `runs` (`state`);