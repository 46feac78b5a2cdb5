CREATE TABLE `notes` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`rig_id` integer NOT NULL,
	`capture_id` integer NOT NULL,
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
CREATE INDEX `notes_capture_frame_idx` ON `notes` (`capture_id`,`link`,`seq`);--> statement-breakpoint
CREATE INDEX `notes_rig_idx` ON `notes` (`rig_id`);