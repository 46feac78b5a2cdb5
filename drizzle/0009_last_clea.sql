ALTER TABLE `exchanges` ADD `damaged_response_frame_ids` text DEFAULT '[]' NOT NULL;--> statement-breakpoint
ALTER TABLE `exchanges` ADD `lock_conflicts` text DEFAULT '[]' NOT NULL;--> statement-breakpoint
ALTER TABLE `recovered_files` ADD `size_source` text;--> statement-breakpoint
ALTER TABLE `recovered_files` ADD `size_exchange_id` integer;--> statement-breakpoint
ALTER TABLE `recovered_files` ADD `lock_conflicts` text;