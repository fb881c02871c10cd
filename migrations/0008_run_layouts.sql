CREATE TABLE `run_layouts` (
	`run_id` text PRIMARY KEY NOT NULL,
	`head` text NOT NULL,
	`names` text NOT NULL,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
INSERT INTO `run_layouts` (`run_id`, `head`, `names`)
SELECT `id`,
	json_set(json_remove(`layout`, '$.nodes', '$.nodeIsRail', '$.devices', '$.deviceTypes'),
		'$.nodeCount', json_array_length(`layout`, '$.nodes'),
		'$.deviceCount', json_array_length(`layout`, '$.devices')),
	json_object('nodes', json_extract(`layout`, '$.nodes'), 'nodeIsRail', json_extract(`layout`, '$.nodeIsRail'),
		'devices', json_extract(`layout`, '$.devices'), 'deviceTypes', json_extract(`layout`, '$.deviceTypes'))
FROM `runs` WHERE `layout` IS NOT NULL AND json_valid(`layout`);
--> statement-breakpoint
ALTER TABLE `runs` DROP COLUMN `layout`;