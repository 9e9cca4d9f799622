CREATE TABLE `window_features` (
	`window_id` bigint unsigned NOT NULL,
	`station_id` bigint unsigned NOT NULL,
	`window_start` datetime(3) NOT NULL,
	`lead_channel` varchar(40) NOT NULL,
	`lead_log10_ratio` double,
	`lead_sta_lta_peak` double NOT NULL,
	`noise_level_db` double,
	`noise_level_units` varchar(20),
	`flag` varchar(20) NOT NULL,
	`created_at` datetime(3) NOT NULL,
	CONSTRAINT `window_features_window_id` PRIMARY KEY(`window_id`)
);
--> statement-breakpoint
ALTER TABLE `window_features` ADD CONSTRAINT `window_features_window_id_windows_id_fk` FOREIGN KEY (`window_id`) REFERENCES `windows`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `window_features` ADD CONSTRAINT `window_features_station_id_stations_id_fk` FOREIGN KEY (`station_id`) REFERENCES `stations`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `window_features_station_start_idx` ON `window_features` (`station_id`,`window_start`);