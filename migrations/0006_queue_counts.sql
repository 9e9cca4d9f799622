CREATE TABLE `queue_counts` (
	`station_id` bigint unsigned NOT NULL,
	`state` varchar(20) NOT NULL,
	`flag` varchar(20) NOT NULL,
	`label_key` varchar(40) NOT NULL,
	`n` bigint NOT NULL DEFAULT 0,
	CONSTRAINT `queue_counts_station_id_state_flag_label_key_pk` PRIMARY KEY(`station_id`,`state`,`flag`,`label_key`)
);
--> statement-breakpoint
CREATE INDEX `queue_items_label_state_score_idx` ON `queue_items` (`label_type`,`state`,`score`);--> statement-breakpoint
CREATE INDEX `queue_items_state_window_cover_idx` ON `queue_items` (`state`,`window_start`,`station_id`,`flag`,`label_type`,`score`);--> statement-breakpoint
CREATE INDEX `queue_items_state_score_cover_idx` ON `queue_items` (`state`,`score`,`station_id`,`flag`,`label_type`,`window_start`);--> statement-breakpoint
-- Issue 9: queue_counts holds the items per (station, state, flag, label type) and is kept exact by
-- the triggers below, so every statement that writes queue_items (from any service, job or bulk
-- load) changes the counts in its own transaction. MariaDB does not fire triggers for rows removed
-- by a foreign-key cascade; nothing deletes windows or uploads (whose cascade would remove items).
INSERT INTO `queue_counts` (`station_id`, `state`, `flag`, `label_key`, `n`)
SELECT `station_id`, `state`, `flag`, COALESCE(`label_type`, ''), COUNT(*) FROM `queue_items` GROUP BY `station_id`, `state`, `flag`, COALESCE(`label_type`, '');
--> statement-breakpoint
CREATE TRIGGER `queue_items_counts_insert` AFTER INSERT ON `queue_items` FOR EACH ROW
  INSERT INTO `queue_counts` (`station_id`, `state`, `flag`, `label_key`, `n`)
  VALUES (NEW.`station_id`, NEW.`state`, NEW.`flag`, COALESCE(NEW.`label_type`, ''), 1)
  ON DUPLICATE KEY UPDATE `n` = `n` + 1;
--> statement-breakpoint
CREATE TRIGGER `queue_items_counts_delete` AFTER DELETE ON `queue_items` FOR EACH ROW
  UPDATE `queue_counts` SET `n` = `n` - 1
  WHERE `station_id` = OLD.`station_id` AND `state` = OLD.`state` AND `flag` = OLD.`flag` AND `label_key` = COALESCE(OLD.`label_type`, '');
--> statement-breakpoint
-- A change of key moves one from the old row to the new one. The two rows are locked in key order,
-- so two transactions moving items in opposite directions cannot deadlock on them.
CREATE TRIGGER `queue_items_counts_update` AFTER UPDATE ON `queue_items` FOR EACH ROW
BEGIN
  IF NOT (OLD.`station_id` = NEW.`station_id` AND OLD.`state` = NEW.`state` AND OLD.`flag` = NEW.`flag` AND COALESCE(OLD.`label_type`, '') = COALESCE(NEW.`label_type`, '')) THEN
    IF (OLD.`station_id`, OLD.`state`, OLD.`flag`, COALESCE(OLD.`label_type`, '')) < (NEW.`station_id`, NEW.`state`, NEW.`flag`, COALESCE(NEW.`label_type`, '')) THEN
      UPDATE `queue_counts` SET `n` = `n` - 1
      WHERE `station_id` = OLD.`station_id` AND `state` = OLD.`state` AND `flag` = OLD.`flag` AND `label_key` = COALESCE(OLD.`label_type`, '');
      INSERT INTO `queue_counts` (`station_id`, `state`, `flag`, `label_key`, `n`)
      VALUES (NEW.`station_id`, NEW.`state`, NEW.`flag`, COALESCE(NEW.`label_type`, ''), 1)
      ON DUPLICATE KEY UPDATE `n` = `n` + 1;
    ELSE
      INSERT INTO `queue_counts` (`station_id`, `state`, `flag`, `label_key`, `n`)
      VALUES (NEW.`station_id`, NEW.`state`, NEW.`flag`, COALESCE(NEW.`label_type`, ''), 1)
      ON DUPLICATE KEY UPDATE `n` = `n` + 1;
      UPDATE `queue_counts` SET `n` = `n` - 1
      WHERE `station_id` = OLD.`station_id` AND `state` = OLD.`state` AND `flag` = OLD.`flag` AND `label_key` = COALESCE(OLD.`label_type`, '');
    END IF;
  END IF;
END;
