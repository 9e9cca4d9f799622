CREATE TABLE `audit_log` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`actor_user_id` varchar(255),
	`actor_label` varchar(254),
	`action` varchar(64) NOT NULL,
	`target_type` varchar(40),
	`target_id` varchar(255),
	`details` json,
	`ip_address` varchar(64),
	`created_at` datetime(3) NOT NULL,
	CONSTRAINT `audit_log_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `queue_items` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`window_id` bigint unsigned NOT NULL,
	`station_id` bigint unsigned NOT NULL,
	`state` varchar(20) NOT NULL,
	`score` double NOT NULL,
	`flag` varchar(20) NOT NULL,
	`reasons` json NOT NULL,
	`window_start` datetime(3) NOT NULL,
	`version` int unsigned NOT NULL DEFAULT 1,
	`claimed_by_user_id` varchar(255),
	`claimed_at` datetime(3),
	`label` json,
	`updated_by_user_id` varchar(255),
	`created_at` datetime(3) NOT NULL,
	`updated_at` datetime(3) NOT NULL,
	CONSTRAINT `queue_items_id` PRIMARY KEY(`id`),
	CONSTRAINT `queue_items_window_id_unique` UNIQUE(`window_id`)
);
--> statement-breakpoint
CREATE TABLE `sessions` (
	`id` varchar(255) NOT NULL,
	`user_id` varchar(255) NOT NULL,
	`expires_at` datetime NOT NULL,
	`created_at` datetime(3),
	`ip_address` varchar(64),
	`user_agent` varchar(255),
	CONSTRAINT `sessions_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `channels` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`station_id` bigint unsigned NOT NULL,
	`location` varchar(8) NOT NULL DEFAULT '',
	`code` varchar(8) NOT NULL,
	`sample_rate_hz` double NOT NULL,
	`sensitivity` double,
	`sensitivity_frequency_hz` double,
	`sensitivity_input_units` varchar(40),
	`response` json,
	`created_at` datetime(3) NOT NULL,
	`updated_at` datetime(3) NOT NULL,
	CONSTRAINT `channels_id` PRIMARY KEY(`id`),
	CONSTRAINT `channels_station_loc_cha_uq` UNIQUE(`station_id`,`location`,`code`)
);
--> statement-breakpoint
CREATE TABLE `ingest_tokens` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`station_id` bigint unsigned NOT NULL,
	`label` varchar(120) NOT NULL,
	`token_hash` varchar(64) NOT NULL,
	`created_by_user_id` varchar(255),
	`created_at` datetime(3) NOT NULL,
	`last_used_at` datetime(3),
	`revoked_at` datetime(3),
	CONSTRAINT `ingest_tokens_id` PRIMARY KEY(`id`),
	CONSTRAINT `ingest_tokens_token_hash_unique` UNIQUE(`token_hash`)
);
--> statement-breakpoint
CREATE TABLE `station_assignments` (
	`user_id` varchar(255) NOT NULL,
	`station_id` bigint unsigned NOT NULL,
	CONSTRAINT `station_assignments_user_id_station_id_pk` PRIMARY KEY(`user_id`,`station_id`)
);
--> statement-breakpoint
CREATE TABLE `stations` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`network` varchar(8) NOT NULL,
	`code` varchar(8) NOT NULL,
	`name` varchar(200) NOT NULL,
	`latitude` double NOT NULL,
	`longitude` double NOT NULL,
	`elevation_m` double NOT NULL DEFAULT 0,
	`site_description` text,
	`profile` json,
	`created_at` datetime(3) NOT NULL,
	`updated_at` datetime(3) NOT NULL,
	CONSTRAINT `stations_id` PRIMARY KEY(`id`),
	CONSTRAINT `stations_net_sta_uq` UNIQUE(`network`,`code`)
);
--> statement-breakpoint
CREATE TABLE `uploads` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`sha256` char(64) NOT NULL,
	`filename` varchar(255) NOT NULL,
	`content_type` varchar(100),
	`size_bytes` bigint unsigned NOT NULL,
	`format` varchar(10) NOT NULL,
	`original` longblob NOT NULL,
	`station_id` bigint unsigned NOT NULL,
	`uploaded_by_user_id` varchar(255),
	`ingest_token_id` bigint unsigned,
	`created_at` datetime(3) NOT NULL,
	CONSTRAINT `uploads_id` PRIMARY KEY(`id`),
	CONSTRAINT `uploads_sha256_unique` UNIQUE(`sha256`)
);
--> statement-breakpoint
CREATE TABLE `window_channels` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`window_id` bigint unsigned NOT NULL,
	`stream_id` varchar(40) NOT NULL,
	`sample_rate_hz` double NOT NULL,
	`start_time_us` bigint NOT NULL,
	`sample_count` int unsigned NOT NULL,
	`samples` longblob NOT NULL,
	`qc` json,
	CONSTRAINT `window_channels_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `windows` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`upload_id` bigint unsigned NOT NULL,
	`station_id` bigint unsigned NOT NULL,
	`start_time` datetime(3) NOT NULL,
	`end_time` datetime(3) NOT NULL,
	`analysis` json NOT NULL,
	`engine_version` varchar(20) NOT NULL,
	`created_at` datetime(3) NOT NULL,
	CONSTRAINT `windows_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `user_roles` (
	`user_id` varchar(255) NOT NULL,
	`role` varchar(20) NOT NULL,
	CONSTRAINT `user_roles_user_id_role_pk` PRIMARY KEY(`user_id`,`role`)
);
--> statement-breakpoint
CREATE TABLE `users` (
	`id` varchar(255) NOT NULL,
	`email` varchar(254) NOT NULL,
	`display_name` varchar(120) NOT NULL,
	`password_hash` varchar(255),
	`active` boolean NOT NULL DEFAULT true,
	`created_at` datetime(3) NOT NULL,
	`updated_at` datetime(3) NOT NULL,
	CONSTRAINT `users_id` PRIMARY KEY(`id`),
	CONSTRAINT `users_email_unique` UNIQUE(`email`)
);
--> statement-breakpoint
ALTER TABLE `queue_items` ADD CONSTRAINT `queue_items_window_id_windows_id_fk` FOREIGN KEY (`window_id`) REFERENCES `windows`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `queue_items` ADD CONSTRAINT `queue_items_station_id_stations_id_fk` FOREIGN KEY (`station_id`) REFERENCES `stations`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `queue_items` ADD CONSTRAINT `queue_items_claimed_by_user_id_users_id_fk` FOREIGN KEY (`claimed_by_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `queue_items` ADD CONSTRAINT `queue_items_updated_by_user_id_users_id_fk` FOREIGN KEY (`updated_by_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `sessions` ADD CONSTRAINT `sessions_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `channels` ADD CONSTRAINT `channels_station_id_stations_id_fk` FOREIGN KEY (`station_id`) REFERENCES `stations`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `ingest_tokens` ADD CONSTRAINT `ingest_tokens_station_id_stations_id_fk` FOREIGN KEY (`station_id`) REFERENCES `stations`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `ingest_tokens` ADD CONSTRAINT `ingest_tokens_created_by_user_id_users_id_fk` FOREIGN KEY (`created_by_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `station_assignments` ADD CONSTRAINT `station_assignments_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `station_assignments` ADD CONSTRAINT `station_assignments_station_id_stations_id_fk` FOREIGN KEY (`station_id`) REFERENCES `stations`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `uploads` ADD CONSTRAINT `uploads_station_id_stations_id_fk` FOREIGN KEY (`station_id`) REFERENCES `stations`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `uploads` ADD CONSTRAINT `uploads_uploaded_by_user_id_users_id_fk` FOREIGN KEY (`uploaded_by_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `uploads` ADD CONSTRAINT `uploads_ingest_token_id_ingest_tokens_id_fk` FOREIGN KEY (`ingest_token_id`) REFERENCES `ingest_tokens`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `window_channels` ADD CONSTRAINT `window_channels_window_id_windows_id_fk` FOREIGN KEY (`window_id`) REFERENCES `windows`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `windows` ADD CONSTRAINT `windows_upload_id_uploads_id_fk` FOREIGN KEY (`upload_id`) REFERENCES `uploads`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `windows` ADD CONSTRAINT `windows_station_id_stations_id_fk` FOREIGN KEY (`station_id`) REFERENCES `stations`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `user_roles` ADD CONSTRAINT `user_roles_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `audit_log_created_idx` ON `audit_log` (`created_at`);--> statement-breakpoint
CREATE INDEX `audit_log_actor_idx` ON `audit_log` (`actor_user_id`,`created_at`);--> statement-breakpoint
CREATE INDEX `audit_log_action_idx` ON `audit_log` (`action`,`created_at`);--> statement-breakpoint
CREATE INDEX `audit_log_target_idx` ON `audit_log` (`target_type`,`target_id`);--> statement-breakpoint
CREATE INDEX `queue_items_state_score_idx` ON `queue_items` (`state`,`score`);--> statement-breakpoint
CREATE INDEX `queue_items_state_created_idx` ON `queue_items` (`state`,`created_at`);--> statement-breakpoint
CREATE INDEX `queue_items_station_created_idx` ON `queue_items` (`station_id`,`created_at`);--> statement-breakpoint
CREATE INDEX `queue_items_window_start_idx` ON `queue_items` (`window_start`);--> statement-breakpoint
CREATE INDEX `sessions_user_idx` ON `sessions` (`user_id`);--> statement-breakpoint
CREATE INDEX `ingest_tokens_station_idx` ON `ingest_tokens` (`station_id`);--> statement-breakpoint
CREATE INDEX `station_assignments_station_idx` ON `station_assignments` (`station_id`);--> statement-breakpoint
CREATE INDEX `uploads_station_idx` ON `uploads` (`station_id`,`created_at`);--> statement-breakpoint
CREATE INDEX `window_channels_window_idx` ON `window_channels` (`window_id`);--> statement-breakpoint
CREATE INDEX `windows_station_time_idx` ON `windows` (`station_id`,`start_time`);--> statement-breakpoint
CREATE INDEX `windows_upload_idx` ON `windows` (`upload_id`);--> statement-breakpoint
CREATE INDEX `user_roles_role_idx` ON `user_roles` (`role`);