DROP INDEX `queue_items_state_score_id_idx` ON `queue_items`;--> statement-breakpoint
DROP INDEX `queue_items_state_created_id_idx` ON `queue_items`;--> statement-breakpoint
DROP INDEX `queue_items_label_type_idx` ON `queue_items`;