ALTER TABLE `trace` ADD `original_name` text;--> statement-breakpoint
ALTER TABLE `trace` ADD `warnings` text;--> statement-breakpoint
CREATE INDEX `trace_sha_idx` ON `trace` (`sha256`);--> statement-breakpoint
CREATE INDEX `photo_sha_idx` ON `photo` (`sha256`);