CREATE TABLE `change_counter` (
	`id` tinyint unsigned NOT NULL,
	`seq` bigint unsigned NOT NULL,
	CONSTRAINT `change_counter_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `change_log` (
	`seq` bigint unsigned NOT NULL,
	`resource` varchar(30) NOT NULL,
	`resource_id` bigint unsigned NOT NULL,
	`kind` varchar(20) NOT NULL,
	`version` int unsigned NOT NULL,
	`summary` json,
	`created_at` datetime(3) NOT NULL,
	CONSTRAINT `change_log_seq` PRIMARY KEY(`seq`)
);
--> statement-breakpoint
CREATE INDEX `change_log_created_idx` ON `change_log` (`created_at`);--> statement-breakpoint
CREATE INDEX `change_log_resource_idx` ON `change_log` (`resource`,`resource_id`);--> statement-breakpoint
INSERT INTO `change_counter` (`id`, `seq`) VALUES (1, 0);
