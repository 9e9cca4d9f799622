ALTER TABLE `queue_items` ADD `label_type` varchar(40);--> statement-breakpoint
CREATE INDEX `queue_items_state_score_id_idx` ON `queue_items` (`state`,`score`,`id`);--> statement-breakpoint
CREATE INDEX `queue_items_state_created_id_idx` ON `queue_items` (`state`,`created_at`,`id`);--> statement-breakpoint
CREATE INDEX `queue_items_station_state_score_idx` ON `queue_items` (`station_id`,`state`,`score`);--> statement-breakpoint
CREATE INDEX `queue_items_flag_state_score_idx` ON `queue_items` (`flag`,`state`,`score`);--> statement-breakpoint
CREATE INDEX `queue_items_label_type_idx` ON `queue_items` (`label_type`,`state`);--> statement-breakpoint
CREATE INDEX `queue_items_state_claimed_idx` ON `queue_items` (`state`,`claimed_at`);