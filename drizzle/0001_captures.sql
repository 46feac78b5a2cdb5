CREATE TABLE `captures` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`rig_id` integer NOT NULL,
	`name` text NOT NULL,
	`size` integer NOT NULL,
	`sha256` text NOT NULL,
	`format` text,
	`detect_reason` text DEFAULT '' NOT NULL,
	`settings` text,
	`uploaded_by` integer,
	`created_at` integer NOT NULL,
	`current_job_id` integer,
	FOREIGN KEY (`rig_id`) REFERENCES `rigs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`uploaded_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `captures_rig_idx` ON `captures` (`rig_id`);--> statement-breakpoint
CREATE INDEX `captures_sha_idx` ON `captures` (`sha256`);--> statement-breakpoint
CREATE TABLE `decode_jobs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`capture_id` integer NOT NULL,
	`state` text NOT NULL,
	`stage` text DEFAULT 'queued' NOT NULL,
	`bytes_read` integer DEFAULT 0 NOT NULL,
	`bytes_total` integer DEFAULT 0 NOT NULL,
	`frames` integer DEFAULT 0 NOT NULL,
	`events` integer DEFAULT 0 NOT NULL,
	`error` text,
	`settings` text NOT NULL,
	`sample_period` real,
	`links` text,
	`last_sample` real,
	`issues` text,
	`rows_cleared` integer DEFAULT false NOT NULL,
	`search_indexed_to` integer DEFAULT 0 NOT NULL,
	`created_at` integer NOT NULL,
	`started_at` integer,
	`finished_at` integer,
	FOREIGN KEY (`capture_id`) REFERENCES `captures`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `decode_jobs_capture_idx` ON `decode_jobs` (`capture_id`,`id`);--> statement-breakpoint
CREATE INDEX `decode_jobs_state_idx` ON `decode_jobs` (`state`);--> statement-breakpoint
CREATE TABLE `frames` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`job_id` integer NOT NULL,
	`capture_id` integer NOT NULL,
	`link` text NOT NULL,
	`seq` integer NOT NULL,
	`first_sample` real NOT NULL,
	`last_sample` real NOT NULL,
	`t` real NOT NULL,
	`t_end` real NOT NULL,
	`status` text NOT NULL,
	`address` integer,
	`control` integer,
	`kind` text,
	`command` text,
	`ns` integer,
	`nr` integer,
	`pf` integer,
	`info_length` integer NOT NULL,
	`bit_length` integer NOT NULL,
	`bytes` blob NOT NULL,
	`fcs_received` integer,
	`fcs_computed` integer,
	`flipped_bit` integer,
	`stuffed` text NOT NULL,
	`hex` text NOT NULL,
	`text` text NOT NULL
);
--> statement-breakpoint
CREATE INDEX `frames_job_t_idx` ON `frames` (`job_id`,`t`,`id`);--> statement-breakpoint
CREATE INDEX `frames_job_status_t_idx` ON `frames` (`job_id`,`status`,`t`);--> statement-breakpoint
CREATE INDEX `frames_job_address_t_idx` ON `frames` (`job_id`,`address`,`t`);--> statement-breakpoint
CREATE INDEX `frames_job_link_t_idx` ON `frames` (`job_id`,`link`,`t`);--> statement-breakpoint
CREATE TABLE `line_events` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`job_id` integer NOT NULL,
	`capture_id` integer NOT NULL,
	`link` text,
	`channel` text NOT NULL,
	`kind` text NOT NULL,
	`sample` real NOT NULL,
	`end_sample` real,
	`count` integer,
	`t` real NOT NULL,
	`t_end` real
);
--> statement-breakpoint
CREATE INDEX `line_events_job_t_idx` ON `line_events` (`job_id`,`t`,`id`);--> statement-breakpoint
CREATE TABLE `seek_points` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`job_id` integer NOT NULL,
	`byte_offset` integer NOT NULL,
	`sample` real NOT NULL,
	`levels` text NOT NULL
);
--> statement-breakpoint
CREATE INDEX `seek_points_job_sample_idx` ON `seek_points` (`job_id`,`sample`);