ALTER TABLE `change_log` ADD `audience` json;--> statement-breakpoint
UPDATE `change_log` SET `audience` = JSON_OBJECT('action', 'queue.view', 'stationIds', JSON_ARRAY(CAST(JSON_VALUE(`summary`, '$.stationId') AS UNSIGNED))) WHERE `resource` = 'item' AND JSON_VALUE(`summary`, '$.stationId') IS NOT NULL;--> statement-breakpoint
UPDATE `change_log` SET `audience` = JSON_OBJECT('action', 'inbox.view', 'userId', JSON_VALUE(`summary`, '$.userId')) WHERE `resource` = 'inbox' AND JSON_VALUE(`summary`, '$.userId') IS NOT NULL;
