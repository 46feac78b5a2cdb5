CREATE TABLE `call_runs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`capture_id` integer NOT NULL,
	`decode_job_id` integer NOT NULL,
	`map_id` integer NOT NULL,
	`map_version` integer NOT NULL,
	`state` text NOT NULL,
	`error` text,
	`exchanges` integer DEFAULT 0 NOT NULL,
	`files` integer DEFAULT 0 NOT NULL,
	`rows_cleared` integer DEFAULT false NOT NULL,
	`created_at` integer NOT NULL,
	`finished_at` integer,
	FOREIGN KEY (`capture_id`) REFERENCES `captures`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `call_runs_capture_idx` ON `call_runs` (`capture_id`,`id`);--> statement-breakpoint
CREATE TABLE `capture_call_layers` (
	`capture_id` integer PRIMARY KEY NOT NULL,
	`map_id` integer,
	`map_version` integer,
	`current_run_id` integer,
	FOREIGN KEY (`capture_id`) REFERENCES `captures`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`map_id`) REFERENCES `field_maps`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE TABLE `exchange_frames` (
	`run_id` integer NOT NULL,
	`frame_id` integer NOT NULL,
	`exchange_id` integer NOT NULL
);
--> statement-breakpoint
CREATE INDEX `exchange_frames_run_frame_idx` ON `exchange_frames` (`run_id`,`frame_id`);--> statement-breakpoint
CREATE TABLE `exchanges` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`run_id` integer NOT NULL,
	`capture_id` integer NOT NULL,
	`station` integer NOT NULL,
	`call_code` integer,
	`call_name` text,
	`tag` integer,
	`file_name` text,
	`record_number` integer,
	`status` integer,
	`status_meaning` text,
	`request_frame_id` integer,
	`retry_frame_ids` text NOT NULL,
	`response_frame_ids` text NOT NULL,
	`t_request` real NOT NULL,
	`t_request_end` real NOT NULL,
	`t_response` real,
	`rtt` real,
	`outcome` text NOT NULL,
	`retries` integer NOT NULL,
	`service_delay` real,
	`user` integer,
	`answer` text
);
--> statement-breakpoint
CREATE INDEX `exchanges_run_t_idx` ON `exchanges` (`run_id`,`t_request`,`id`);--> statement-breakpoint
CREATE INDEX `exchanges_run_station_t_idx` ON `exchanges` (`run_id`,`station`,`t_request`);--> statement-breakpoint
CREATE INDEX `exchanges_run_rtt_idx` ON `exchanges` (`run_id`,`rtt`);--> statement-breakpoint
CREATE TABLE `field_map_versions` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`map_id` integer NOT NULL,
	`version` integer NOT NULL,
	`document` text NOT NULL,
	`created_by` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`map_id`) REFERENCES `field_maps`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `field_map_versions_map_version_uq` ON `field_map_versions` (`map_id`,`version`);--> statement-breakpoint
CREATE TABLE `field_maps` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`rig_id` integer NOT NULL,
	`name` text NOT NULL,
	`built_in` integer DEFAULT false NOT NULL,
	`latest_version` integer DEFAULT 1 NOT NULL,
	`created_at` integer NOT NULL,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`rig_id`) REFERENCES `rigs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `field_maps_rig_idx` ON `field_maps` (`rig_id`);--> statement-breakpoint
CREATE TABLE `recovered_files` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`run_id` integer NOT NULL,
	`capture_id` integer NOT NULL,
	`key` text NOT NULL,
	`name` text NOT NULL,
	`kind` text NOT NULL,
	`user` integer,
	`stations` text NOT NULL,
	`record_count` integer NOT NULL,
	`end_known` integer NOT NULL,
	`bytes` blob NOT NULL,
	`sha256` text NOT NULL,
	`coverage` text NOT NULL,
	`conflicts` text NOT NULL,
	`exchange_ids` text NOT NULL
);
--> statement-breakpoint
CREATE INDEX `recovered_files_run_idx` ON `recovered_files` (`run_id`,`name`);