CREATE TABLE `run_chunks` (
	`run_id` text NOT NULL,
	`chunk` integer NOT NULL,
	`start` integer NOT NULL,
	`end` integer NOT NULL,
	`tag` integer DEFAULT 0 NOT NULL,
	`state` text DEFAULT 'queued' NOT NULL,
	`attempts` integer DEFAULT 0 NOT NULL,
	`worker_token_id` text,
	`stats` text,
	`flags` blob,
	`error` text,
	`claimed_at` integer,
	`finished_at` integer,
	PRIMARY KEY(`run_id`, `chunk`),
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `worker_tokens` (
	`id` text PRIMARY KEY NOT NULL,
	`workspace_id` text NOT NULL,
	`name` text NOT NULL,
	`prefix` text NOT NULL,
	`token_hash` text NOT NULL,
	`created_by` text NOT NULL,
	`last_used_at` integer,
	`revoked_at` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`workspace_id`) REFERENCES `workspaces`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `worker_tokens_hash_idx` ON `worker_tokens` (`token_hash`);--> statement-breakpoint
CREATE INDEX `worker_tokens_workspace_idx` ON `worker_tokens` (`workspace_id`);