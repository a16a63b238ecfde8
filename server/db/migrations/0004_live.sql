CREATE TABLE `annotation` (
	`id` text PRIMARY KEY NOT NULL,
	`case_id` text NOT NULL,
	`trace_id` text NOT NULL,
	`author_id` text,
	`client_id` text,
	`kind` text NOT NULL,
	`t0` real NOT NULL,
	`t1` real,
	`level` real,
	`label` text,
	`channel` text,
	`color` text NOT NULL,
	`seq` integer NOT NULL,
	`created_at` integer NOT NULL,
	`updated_at` integer NOT NULL,
	`deleted_at` integer,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`trace_id`) REFERENCES `trace`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`author_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `annotation_case_seq_idx` ON `annotation` (`case_id`,`seq`);--> statement-breakpoint
CREATE INDEX `annotation_trace_idx` ON `annotation` (`trace_id`);--> statement-breakpoint
CREATE UNIQUE INDEX `annotation_client_idx` ON `annotation` (`author_id`,`client_id`);--> statement-breakpoint
CREATE TABLE `case_seq` (
	`case_id` text PRIMARY KEY NOT NULL,
	`seq` integer DEFAULT 0 NOT NULL,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `message` (
	`id` text PRIMARY KEY NOT NULL,
	`case_id` text NOT NULL,
	`author_id` text,
	`client_id` text,
	`kind` text NOT NULL,
	`text` text NOT NULL,
	`request` text,
	`color` text NOT NULL,
	`seq` integer NOT NULL,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`author_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `message_case_seq_idx` ON `message` (`case_id`,`seq`);--> statement-breakpoint
CREATE UNIQUE INDEX `message_client_idx` ON `message` (`author_id`,`client_id`);