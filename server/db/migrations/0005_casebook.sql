CREATE TABLE `casebook_entry` (
	`doc_id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`id` text NOT NULL,
	`case_id` text,
	`expert_id` text,
	`title` text NOT NULL,
	`vehicle` text DEFAULT '' NOT NULL,
	`complaint` text DEFAULT '' NOT NULL,
	`symptoms` text DEFAULT '' NOT NULL,
	`codes` text DEFAULT '' NOT NULL,
	`diagnosis` text DEFAULT '' NOT NULL,
	`root_cause` text DEFAULT '' NOT NULL,
	`fix` text DEFAULT '' NOT NULL,
	`tags` text DEFAULT '' NOT NULL,
	`make` text,
	`make_key` text,
	`model` text,
	`model_key` text,
	`year` integer,
	`engine` text,
	`engine_key` text,
	`system` text,
	`code_list` text NOT NULL,
	`confirmed` integer DEFAULT true NOT NULL,
	`rating` integer,
	`body` text NOT NULL,
	`hidden` integer DEFAULT false NOT NULL,
	`hidden_reason` text,
	`hidden_by` text,
	`hidden_at` integer,
	`edited_by` text,
	`rev` integer NOT NULL,
	`published_at` integer NOT NULL,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`expert_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `casebook_entry_id_unique` ON `casebook_entry` (`id`);--> statement-breakpoint
CREATE UNIQUE INDEX `casebook_entry_case_idx` ON `casebook_entry` (`case_id`);--> statement-breakpoint
CREATE INDEX `casebook_entry_expert_idx` ON `casebook_entry` (`expert_id`);--> statement-breakpoint
CREATE INDEX `casebook_entry_rev_idx` ON `casebook_entry` (`rev`);--> statement-breakpoint
CREATE INDEX `casebook_entry_published_idx` ON `casebook_entry` (`published_at`);--> statement-breakpoint
CREATE TABLE `casebook_vector` (
	`entry_id` text PRIMARY KEY NOT NULL,
	`version` integer NOT NULL,
	`vector` blob NOT NULL,
	`pattern` text NOT NULL,
	`kinds` text DEFAULT '' NOT NULL,
	FOREIGN KEY (`entry_id`) REFERENCES `casebook_entry`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `casebook_view` (
	`entry_id` text NOT NULL,
	`user_id` text NOT NULL,
	`first_at` integer NOT NULL,
	`last_at` integer NOT NULL,
	`count` integer DEFAULT 1 NOT NULL,
	FOREIGN KEY (`entry_id`) REFERENCES `casebook_entry`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `casebook_view_unique` ON `casebook_view` (`entry_id`,`user_id`);--> statement-breakpoint
CREATE TABLE `casebook_vote` (
	`entry_id` text NOT NULL,
	`user_id` text NOT NULL,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`entry_id`) REFERENCES `casebook_entry`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `casebook_vote_unique` ON `casebook_vote` (`entry_id`,`user_id`);--> statement-breakpoint
CREATE INDEX `casebook_vote_user_idx` ON `casebook_vote` (`user_id`);