CREATE TABLE `candidate_events` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`anchor_item_id` bigint unsigned NOT NULL,
	`first_arrival_at` datetime(3) NOT NULL,
	`last_arrival_at` datetime(3) NOT NULL,
	`station_count` int unsigned NOT NULL,
	`member_count` int unsigned NOT NULL,
	`version` int unsigned NOT NULL DEFAULT 1,
	`created_at` datetime(3) NOT NULL,
	`updated_at` datetime(3) NOT NULL,
	CONSTRAINT `candidate_events_id` PRIMARY KEY(`id`),
	CONSTRAINT `candidate_events_anchor_uq` UNIQUE(`anchor_item_id`)
);
--> statement-breakpoint
CREATE TABLE `inbox_entries` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`user_id` varchar(255) NOT NULL,
	`item_id` bigint unsigned NOT NULL,
	`reason` text NOT NULL,
	`escalated_by_user_id` varchar(255),
	`subject` varchar(300) NOT NULL,
	`created_at` datetime(3) NOT NULL,
	`read_at` datetime(3),
	`acknowledged_at` datetime(3),
	`resolution` varchar(20),
	`resolution_comment` text,
	`resolved_by_user_id` varchar(255),
	`resolved_at` datetime(3),
	`mail_error` varchar(500),
	CONSTRAINT `inbox_entries_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `item_arrivals` (
	`item_id` bigint unsigned NOT NULL,
	`station_id` bigint unsigned NOT NULL,
	`arrival_at` datetime(3) NOT NULL,
	`candidate_event_id` bigint unsigned,
	CONSTRAINT `item_arrivals_item_id` PRIMARY KEY(`item_id`)
);
--> statement-breakpoint
CREATE TABLE `item_reviews` (
	`item_id` bigint unsigned NOT NULL,
	`evaluation_status` varchar(20),
	`comment` text,
	`reviewed_by_user_id` varchar(255),
	`reviewed_at` datetime(3),
	`return_comment` text,
	`returned_by_user_id` varchar(255),
	`returned_at` datetime(3),
	CONSTRAINT `item_reviews_item_id` PRIMARY KEY(`item_id`)
);
--> statement-breakpoint
ALTER TABLE `candidate_events` ADD CONSTRAINT `candidate_events_anchor_item_id_queue_items_id_fk` FOREIGN KEY (`anchor_item_id`) REFERENCES `queue_items`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `inbox_entries` ADD CONSTRAINT `inbox_entries_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `inbox_entries` ADD CONSTRAINT `inbox_entries_item_id_queue_items_id_fk` FOREIGN KEY (`item_id`) REFERENCES `queue_items`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `inbox_entries` ADD CONSTRAINT `inbox_entries_escalated_by_user_id_users_id_fk` FOREIGN KEY (`escalated_by_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `inbox_entries` ADD CONSTRAINT `inbox_entries_resolved_by_user_id_users_id_fk` FOREIGN KEY (`resolved_by_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `item_arrivals` ADD CONSTRAINT `item_arrivals_item_id_queue_items_id_fk` FOREIGN KEY (`item_id`) REFERENCES `queue_items`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `item_arrivals` ADD CONSTRAINT `item_arrivals_station_id_stations_id_fk` FOREIGN KEY (`station_id`) REFERENCES `stations`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `item_arrivals` ADD CONSTRAINT `item_arrivals_candidate_event_id_candidate_events_id_fk` FOREIGN KEY (`candidate_event_id`) REFERENCES `candidate_events`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `item_reviews` ADD CONSTRAINT `item_reviews_item_id_queue_items_id_fk` FOREIGN KEY (`item_id`) REFERENCES `queue_items`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `item_reviews` ADD CONSTRAINT `item_reviews_reviewed_by_user_id_users_id_fk` FOREIGN KEY (`reviewed_by_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `item_reviews` ADD CONSTRAINT `item_reviews_returned_by_user_id_users_id_fk` FOREIGN KEY (`returned_by_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `candidate_events_first_idx` ON `candidate_events` (`first_arrival_at`);--> statement-breakpoint
CREATE INDEX `inbox_entries_user_idx` ON `inbox_entries` (`user_id`,`read_at`);--> statement-breakpoint
CREATE INDEX `inbox_entries_item_idx` ON `inbox_entries` (`item_id`);--> statement-breakpoint
CREATE INDEX `item_arrivals_arrival_idx` ON `item_arrivals` (`arrival_at`);--> statement-breakpoint
CREATE INDEX `item_arrivals_event_idx` ON `item_arrivals` (`candidate_event_id`);--> statement-breakpoint
CREATE INDEX `item_reviews_status_idx` ON `item_reviews` (`evaluation_status`,`reviewed_at`);