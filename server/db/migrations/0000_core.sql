CREATE TABLE `account` (
	`id` text PRIMARY KEY NOT NULL,
	`account_id` text NOT NULL,
	`provider_id` text NOT NULL,
	`user_id` text NOT NULL,
	`access_token` text,
	`refresh_token` text,
	`id_token` text,
	`access_token_expires_at` integer,
	`refresh_token_expires_at` integer,
	`scope` text,
	`password` text,
	`created_at` integer NOT NULL,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `account_user_idx` ON `account` (`user_id`);--> statement-breakpoint
CREATE TABLE `rate_limit` (
	`id` text PRIMARY KEY NOT NULL,
	`key` text NOT NULL,
	`count` integer NOT NULL,
	`last_request` integer NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `rate_limit_key_unique` ON `rate_limit` (`key`);--> statement-breakpoint
CREATE TABLE `session` (
	`id` text PRIMARY KEY NOT NULL,
	`expires_at` integer NOT NULL,
	`token` text NOT NULL,
	`created_at` integer NOT NULL,
	`updated_at` integer NOT NULL,
	`ip_address` text,
	`user_agent` text,
	`user_id` text NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `session_token_unique` ON `session` (`token`);--> statement-breakpoint
CREATE INDEX `session_user_idx` ON `session` (`user_id`);--> statement-breakpoint
CREATE TABLE `user` (
	`id` text PRIMARY KEY NOT NULL,
	`name` text NOT NULL,
	`email` text NOT NULL,
	`email_verified` integer DEFAULT false NOT NULL,
	`image` text,
	`role` text DEFAULT 'technician' NOT NULL,
	`shop_id` text,
	`color` text,
	`created_at` integer NOT NULL,
	`updated_at` integer NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `user_email_unique` ON `user` (`email`);--> statement-breakpoint
CREATE INDEX `user_shop_idx` ON `user` (`shop_id`);--> statement-breakpoint
CREATE TABLE `verification` (
	`id` text PRIMARY KEY NOT NULL,
	`identifier` text NOT NULL,
	`value` text NOT NULL,
	`expires_at` integer NOT NULL,
	`created_at` integer,
	`updated_at` integer
);
--> statement-breakpoint
CREATE INDEX `verification_identifier_idx` ON `verification` (`identifier`);--> statement-breakpoint
CREATE TABLE `expert_profile` (
	`user_id` text PRIMARY KEY NOT NULL,
	`systems` text NOT NULL,
	`makes` text NOT NULL,
	`bio` text,
	`years_experience` integer,
	`status` text DEFAULT 'pending' NOT NULL,
	`available` integer DEFAULT false NOT NULL,
	`max_open_cases` integer DEFAULT 3 NOT NULL,
	`stripe_account_id` text,
	`decided_by` text,
	`decided_at` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `invite` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`email` text NOT NULL,
	`name` text,
	`token_hash` text NOT NULL,
	`invited_by` text,
	`expires_at` integer NOT NULL,
	`accepted_at` integer,
	`revoked_at` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shop`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`invited_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `invite_token_hash_unique` ON `invite` (`token_hash`);--> statement-breakpoint
CREATE INDEX `invite_shop_idx` ON `invite` (`shop_id`);--> statement-breakpoint
CREATE TABLE `shop` (
	`id` text PRIMARY KEY NOT NULL,
	`name` text NOT NULL,
	`stripe_customer_id` text,
	`created_at` integer NOT NULL
);
--> statement-breakpoint
CREATE TABLE `case_event` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`case_id` text NOT NULL,
	`actor_id` text,
	`type` text NOT NULL,
	`from_status` text,
	`to_status` text,
	`data` text,
	`at` integer NOT NULL,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `case_event_case_idx` ON `case_event` (`case_id`);--> statement-breakpoint
CREATE TABLE `case` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`created_by` text,
	`status` text DEFAULT 'draft' NOT NULL,
	`title` text,
	`vin` text,
	`vin_check_override` integer DEFAULT false NOT NULL,
	`year` integer,
	`make` text,
	`model` text,
	`engine` text,
	`fuel` text,
	`mileage` integer,
	`mileage_unit` text,
	`transmission` text,
	`complaint` text,
	`symptoms` text,
	`conditions` text,
	`codes` text,
	`system` text,
	`tests_done` text,
	`parts_replaced` text,
	`notes` text,
	`tier` text,
	`price_cents` integer,
	`deadline_at` integer,
	`expert_id` text,
	`claimed_at` integer,
	`submitted_at` integer,
	`created_at` integer NOT NULL,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shop`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`expert_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `case_shop_idx` ON `case` (`shop_id`,`status`);--> statement-breakpoint
CREATE INDEX `case_expert_idx` ON `case` (`expert_id`);--> statement-breakpoint
CREATE TABLE `photo` (
	`id` text PRIMARY KEY NOT NULL,
	`case_id` text NOT NULL,
	`uploaded_by` text,
	`name` text NOT NULL,
	`mime` text NOT NULL,
	`bytes` integer NOT NULL,
	`sha256` text NOT NULL,
	`path` text NOT NULL,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`uploaded_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `photo_case_idx` ON `photo` (`case_id`);--> statement-breakpoint
CREATE TABLE `trace` (
	`id` text PRIMARY KEY NOT NULL,
	`case_id` text NOT NULL,
	`uploaded_by` text,
	`name` text NOT NULL,
	`kind` text NOT NULL,
	`settings` text NOT NULL,
	`sha256` text NOT NULL,
	`original_bytes` integer NOT NULL,
	`original_path` text NOT NULL,
	`data_path` text NOT NULL,
	`samples` integer NOT NULL,
	`sample_rate_hz` real NOT NULL,
	`t0` real DEFAULT 0 NOT NULL,
	`duration_s` real NOT NULL,
	`channels` text NOT NULL,
	`analysis` text,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`uploaded_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `trace_case_idx` ON `trace` (`case_id`);