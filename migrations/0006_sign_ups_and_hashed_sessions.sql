CREATE TABLE `sign_ups` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`address` text NOT NULL,
	`at` integer NOT NULL
);
--> statement-breakpoint
CREATE INDEX `sign_ups_address_idx` ON `sign_ups` (`address`,`at`);--> statement-breakpoint
-- Session ids are stored hashed from now on (app/lib/auth.ts); sessions stored in clear can no longer be found, so they end.
DELETE FROM `sessions`;
