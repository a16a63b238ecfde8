CREATE TABLE `case_reader` (
	`case_id` text NOT NULL,
	`user_id` text NOT NULL,
	`seen_seq` integer DEFAULT 0 NOT NULL,
	`seen_at` integer NOT NULL,
	PRIMARY KEY(`case_id`, `user_id`),
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `case_reader_user_idx` ON `case_reader` (`user_id`);--> statement-breakpoint
CREATE TABLE `notice_preference` (
	`user_id` text NOT NULL,
	`topic` text NOT NULL,
	`in_app` integer NOT NULL,
	`mail` integer NOT NULL,
	`updated_at` integer NOT NULL,
	PRIMARY KEY(`user_id`, `topic`),
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
ALTER TABLE `notification` ADD `count` integer DEFAULT 1 NOT NULL;--> statement-breakpoint
ALTER TABLE `payment` ADD `tax_bp` integer;