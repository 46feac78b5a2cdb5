ALTER TABLE `fault_rows` ADD `race` text;--> statement-breakpoint
ALTER TABLE `fault_summaries` ADD `races` text;--> statement-breakpoint
ALTER TABLE `rigs` ADD `cpu_hz` integer DEFAULT 4000000 NOT NULL;