CREATE TABLE `waveform_templates` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`station_id` bigint unsigned NOT NULL,
	`window_id` bigint unsigned NOT NULL,
	`window_start` datetime(3) NOT NULL,
	`sample_rate_hz` double NOT NULL,
	`channels` json NOT NULL,
	`sample_count` int unsigned NOT NULL,
	`start_time_us` bigint NOT NULL,
	`onset_us` bigint NOT NULL,
	`band_fmin_hz` double NOT NULL,
	`band_fmax_hz` double NOT NULL,
	`samples` longblob NOT NULL,
	`created_at` datetime(3) NOT NULL,
	CONSTRAINT `waveform_templates_id` PRIMARY KEY(`id`),
	CONSTRAINT `waveform_templates_window_id_unique` UNIQUE(`window_id`)
);
--> statement-breakpoint
CREATE TABLE `window_matches` (
	`window_id` bigint unsigned NOT NULL,
	`matched_window_id` bigint unsigned NOT NULL,
	`template_id` bigint unsigned,
	`station_id` bigint unsigned NOT NULL,
	`rank` smallint unsigned NOT NULL,
	`value` double NOT NULL,
	`match_start_us` bigint NOT NULL,
	`per_channel` json NOT NULL,
	`window_start` datetime(3) NOT NULL,
	`band` varchar(40) NOT NULL,
	CONSTRAINT `window_matches_window_id_matched_window_id_pk` PRIMARY KEY(`window_id`,`matched_window_id`)
);
--> statement-breakpoint
ALTER TABLE `waveform_templates` ADD CONSTRAINT `waveform_templates_station_id_stations_id_fk` FOREIGN KEY (`station_id`) REFERENCES `stations`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `waveform_templates` ADD CONSTRAINT `waveform_templates_window_id_windows_id_fk` FOREIGN KEY (`window_id`) REFERENCES `windows`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `window_matches` ADD CONSTRAINT `window_matches_window_id_windows_id_fk` FOREIGN KEY (`window_id`) REFERENCES `windows`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `window_matches` ADD CONSTRAINT `window_matches_matched_window_id_windows_id_fk` FOREIGN KEY (`matched_window_id`) REFERENCES `windows`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `window_matches` ADD CONSTRAINT `window_matches_template_id_waveform_templates_id_fk` FOREIGN KEY (`template_id`) REFERENCES `waveform_templates`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `window_matches` ADD CONSTRAINT `window_matches_station_id_stations_id_fk` FOREIGN KEY (`station_id`) REFERENCES `stations`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `waveform_templates_station_start_idx` ON `waveform_templates` (`station_id`,`window_start`);--> statement-breakpoint
CREATE INDEX `window_matches_station_value_idx` ON `window_matches` (`station_id`,`value`);--> statement-breakpoint
CREATE INDEX `window_matches_matched_idx` ON `window_matches` (`matched_window_id`);