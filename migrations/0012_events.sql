CREATE TABLE `event_amplitudes` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`event_id` bigint unsigned NOT NULL,
	`origin_id` bigint unsigned,
	`stream_id` varchar(40) NOT NULL,
	`amplitude_mm` double NOT NULL,
	`period_s` double,
	`time_us` bigint NOT NULL,
	`window_start_us` bigint NOT NULL,
	`window_end_us` bigint NOT NULL,
	`evaluation_mode` varchar(10) NOT NULL,
	`author_user_id` varchar(255),
	`created_at` datetime(3) NOT NULL,
	CONSTRAINT `event_amplitudes_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `event_arrivals` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`origin_id` bigint unsigned NOT NULL,
	`pick_id` bigint unsigned,
	`stream_id` varchar(40) NOT NULL,
	`phase` varchar(8) NOT NULL,
	`model_phase` varchar(12) NOT NULL,
	`residual_s` double NOT NULL,
	`distance_km` double NOT NULL,
	`azimuth_deg` double NOT NULL,
	`takeoff_angle_deg` double NOT NULL,
	`weight` double NOT NULL,
	CONSTRAINT `event_arrivals_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `event_magnitudes` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`event_id` bigint unsigned NOT NULL,
	`origin_id` bigint unsigned NOT NULL,
	`type` varchar(8) NOT NULL,
	`value` double NOT NULL,
	`uncertainty` double,
	`station_count` int unsigned NOT NULL,
	`method` text NOT NULL,
	`evaluation_mode` varchar(10) NOT NULL,
	`author_user_id` varchar(255),
	`created_at` datetime(3) NOT NULL,
	CONSTRAINT `event_magnitudes_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `event_members` (
	`event_id` bigint unsigned NOT NULL,
	`item_id` bigint unsigned NOT NULL,
	`source` varchar(10) NOT NULL,
	`removed_at` datetime(3),
	`changed_by_user_id` varchar(255),
	CONSTRAINT `event_members_event_id_item_id_pk` PRIMARY KEY(`event_id`,`item_id`)
);
--> statement-breakpoint
CREATE TABLE `event_origins` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`event_id` bigint unsigned NOT NULL,
	`time_us` bigint NOT NULL,
	`latitude` double NOT NULL,
	`longitude` double NOT NULL,
	`depth_km` double NOT NULL,
	`depth_fixed` boolean NOT NULL,
	`depth_fixed_reason` text,
	`horizontal_km68` double NOT NULL,
	`ellipse_major_km` double NOT NULL,
	`ellipse_minor_km` double NOT NULL,
	`ellipse_azimuth_deg` double NOT NULL,
	`depth_km68` double,
	`time_s68` double NOT NULL,
	`rms_s` double NOT NULL,
	`azimuthal_gap_deg` double NOT NULL,
	`minimum_distance_km` double NOT NULL,
	`used_phases` int unsigned NOT NULL,
	`used_stations` int unsigned NOT NULL,
	`velocity_model` json NOT NULL,
	`evaluation_mode` varchar(10) NOT NULL,
	`author_user_id` varchar(255),
	`notes` json NOT NULL,
	`created_at` datetime(3) NOT NULL,
	CONSTRAINT `event_origins_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `event_picks` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`event_id` bigint unsigned NOT NULL,
	`item_id` bigint unsigned,
	`stream_id` varchar(40) NOT NULL,
	`phase` varchar(8) NOT NULL,
	`time_us` bigint NOT NULL,
	`uncertainty_s` double NOT NULL,
	`onset` varchar(12),
	`polarity` varchar(12),
	`evaluation_mode` varchar(10) NOT NULL,
	`author_user_id` varchar(255),
	`method` text,
	`version` int unsigned NOT NULL DEFAULT 1,
	`created_at` datetime(3) NOT NULL,
	`updated_at` datetime(3) NOT NULL,
	CONSTRAINT `event_picks_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `event_station_magnitudes` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`origin_id` bigint unsigned NOT NULL,
	`station` varchar(20) NOT NULL,
	`stream_ids` json NOT NULL,
	`value` double NOT NULL,
	`amplitude_mm` double NOT NULL,
	`period_s` double,
	`distance_km` double NOT NULL,
	`hypocentral_distance_km` double NOT NULL,
	CONSTRAINT `event_station_magnitudes_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `network_event_settings` (
	`network` varchar(8) NOT NULL,
	`model_name` varchar(200) NOT NULL,
	`layers` json NOT NULL,
	`minus_log_a0` varchar(40) NOT NULL DEFAULT 'hutton-boore-1987',
	`station_corrections` json NOT NULL,
	`version` int unsigned NOT NULL DEFAULT 1,
	`updated_by_user_id` varchar(255),
	`updated_at` datetime(3) NOT NULL,
	CONSTRAINT `network_event_settings_network` PRIMARY KEY(`network`)
);
--> statement-breakpoint
CREATE TABLE `seismic_events` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`network` varchar(8) NOT NULL,
	`candidate_event_id` bigint unsigned,
	`preferred_origin_id` bigint unsigned,
	`preferred_magnitude_id` bigint unsigned,
	`event_type` varchar(40),
	`type_certainty` varchar(12),
	`evaluation_status` varchar(12) NOT NULL DEFAULT 'preliminary',
	`location_refusal` text,
	`first_arrival_at` datetime(3) NOT NULL,
	`version` int unsigned NOT NULL DEFAULT 1,
	`created_at` datetime(3) NOT NULL,
	`updated_at` datetime(3) NOT NULL,
	CONSTRAINT `seismic_events_id` PRIMARY KEY(`id`),
	CONSTRAINT `seismic_events_candidate_uq` UNIQUE(`candidate_event_id`)
);
--> statement-breakpoint
ALTER TABLE `event_amplitudes` ADD CONSTRAINT `event_amplitudes_event_id_seismic_events_id_fk` FOREIGN KEY (`event_id`) REFERENCES `seismic_events`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_amplitudes` ADD CONSTRAINT `event_amplitudes_origin_id_event_origins_id_fk` FOREIGN KEY (`origin_id`) REFERENCES `event_origins`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_amplitudes` ADD CONSTRAINT `event_amplitudes_author_user_id_users_id_fk` FOREIGN KEY (`author_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_arrivals` ADD CONSTRAINT `event_arrivals_origin_id_event_origins_id_fk` FOREIGN KEY (`origin_id`) REFERENCES `event_origins`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_arrivals` ADD CONSTRAINT `event_arrivals_pick_id_event_picks_id_fk` FOREIGN KEY (`pick_id`) REFERENCES `event_picks`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_magnitudes` ADD CONSTRAINT `event_magnitudes_event_id_seismic_events_id_fk` FOREIGN KEY (`event_id`) REFERENCES `seismic_events`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_magnitudes` ADD CONSTRAINT `event_magnitudes_origin_id_event_origins_id_fk` FOREIGN KEY (`origin_id`) REFERENCES `event_origins`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_magnitudes` ADD CONSTRAINT `event_magnitudes_author_user_id_users_id_fk` FOREIGN KEY (`author_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_members` ADD CONSTRAINT `event_members_event_id_seismic_events_id_fk` FOREIGN KEY (`event_id`) REFERENCES `seismic_events`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_members` ADD CONSTRAINT `event_members_item_id_queue_items_id_fk` FOREIGN KEY (`item_id`) REFERENCES `queue_items`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_members` ADD CONSTRAINT `event_members_changed_by_user_id_users_id_fk` FOREIGN KEY (`changed_by_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_origins` ADD CONSTRAINT `event_origins_event_id_seismic_events_id_fk` FOREIGN KEY (`event_id`) REFERENCES `seismic_events`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_origins` ADD CONSTRAINT `event_origins_author_user_id_users_id_fk` FOREIGN KEY (`author_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_picks` ADD CONSTRAINT `event_picks_event_id_seismic_events_id_fk` FOREIGN KEY (`event_id`) REFERENCES `seismic_events`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_picks` ADD CONSTRAINT `event_picks_item_id_queue_items_id_fk` FOREIGN KEY (`item_id`) REFERENCES `queue_items`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_picks` ADD CONSTRAINT `event_picks_author_user_id_users_id_fk` FOREIGN KEY (`author_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `event_station_magnitudes` ADD CONSTRAINT `event_station_magnitudes_origin_id_event_origins_id_fk` FOREIGN KEY (`origin_id`) REFERENCES `event_origins`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `network_event_settings` ADD CONSTRAINT `network_event_settings_updated_by_user_id_users_id_fk` FOREIGN KEY (`updated_by_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `seismic_events` ADD CONSTRAINT `seismic_events_candidate_event_id_candidate_events_id_fk` FOREIGN KEY (`candidate_event_id`) REFERENCES `candidate_events`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `event_amplitudes_event_idx` ON `event_amplitudes` (`event_id`,`origin_id`);--> statement-breakpoint
CREATE INDEX `event_arrivals_origin_idx` ON `event_arrivals` (`origin_id`);--> statement-breakpoint
CREATE INDEX `event_magnitudes_event_idx` ON `event_magnitudes` (`event_id`);--> statement-breakpoint
CREATE INDEX `event_members_item_idx` ON `event_members` (`item_id`);--> statement-breakpoint
CREATE INDEX `event_origins_event_idx` ON `event_origins` (`event_id`);--> statement-breakpoint
CREATE INDEX `event_picks_event_idx` ON `event_picks` (`event_id`,`evaluation_mode`);--> statement-breakpoint
CREATE INDEX `event_station_magnitudes_origin_idx` ON `event_station_magnitudes` (`origin_id`);--> statement-breakpoint
CREATE INDEX `seismic_events_first_idx` ON `seismic_events` (`first_arrival_at`);