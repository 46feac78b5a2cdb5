PRAGMA foreign_keys=OFF;--> statement-breakpoint
CREATE TABLE `__new_notes` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`rig_id` integer NOT NULL,
	`capture_id` integer,
	`target` text NOT NULL,
	`link` text,
	`seq` integer,
	`byte_start` integer,
	`byte_end` integer,
	`field_map_id` integer,
	`field_path` text,
	`body` text NOT NULL,
	`author_id` integer,
	`created_at` integer NOT NULL,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`rig_id`) REFERENCES `rigs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`capture_id`) REFERENCES `captures`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`field_map_id`) REFERENCES `field_maps`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
INSERT INTO `__new_notes`("id", "rig_id", "capture_id", "target", "link", "seq", "byte_start", "byte_end", "field_map_id", "field_path", "body", "author_id", "created_at", "updated_at") SELECT "id", "rig_id", "capture_id", "target", "link", "seq", "byte_start", "byte_end", "field_map_id", "field_path", "body", "author_id", "created_at", "updated_at" FROM `notes`;--> statement-breakpoint
DROP TABLE `notes`;--> statement-breakpoint
ALTER TABLE `__new_notes` RENAME TO `notes`;--> statement-breakpoint
PRAGMA foreign_keys=ON;--> statement-breakpoint
CREATE INDEX `notes_capture_frame_idx` ON `notes` (`capture_id`,`link`,`seq`);--> statement-breakpoint
CREATE INDEX `notes_rig_idx` ON `notes` (`rig_id`);--> statement-breakpoint
CREATE INDEX `notes_field_map_idx` ON `notes` (`field_map_id`,`field_path`);