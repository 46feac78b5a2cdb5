CREATE TABLE `fault_rows` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`job_id` integer NOT NULL,
	`link` text NOT NULL,
	`seq` integer NOT NULL,
	`frame_id` integer,
	`first_sample` real NOT NULL,
	`cause` text NOT NULL,
	`station` integer,
	`corrected` integer DEFAULT false NOT NULL,
	`flipped_bit` integer,
	`suspect_line_bit` integer,
	`suspect_sample` real,
	`suspect_exact` integer,
	`focus_sample` real,
	`anomalies` text NOT NULL,
	`next_seq` integer,
	`next_frame_id` integer,
	`retransmission_seq` integer,
	`retransmission_frame_id` integer,
	`retransmission_by` text,
	`retransmission_search` text NOT NULL,
	FOREIGN KEY (`job_id`) REFERENCES `decode_jobs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `fault_rows_job_sample_idx` ON `fault_rows` (`job_id`,`first_sample`);--> statement-breakpoint
CREATE INDEX `fault_rows_job_cause_idx` ON `fault_rows` (`job_id`,`cause`,`first_sample`);--> statement-breakpoint
CREATE TABLE `fault_summaries` (
	`job_id` integer PRIMARY KEY NOT NULL,
	`groups` text NOT NULL,
	`anomaly_groups` text NOT NULL,
	`outside` text NOT NULL,
	`outside_total` integer NOT NULL,
	`bins` text NOT NULL,
	`frames_seen` integer NOT NULL,
	`anomalies_dropped` integer NOT NULL,
	FOREIGN KEY (`job_id`) REFERENCES `decode_jobs`(`id`) ON UPDATE no action ON DELETE cascade
);
