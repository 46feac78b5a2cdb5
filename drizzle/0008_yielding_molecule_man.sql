ALTER TABLE `call_runs` ADD `inputs` text;--> statement-breakpoint
ALTER TABLE `decode_jobs` ADD `inputs` text;