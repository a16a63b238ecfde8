CREATE TABLE `case_answer` (
	`id` text PRIMARY KEY NOT NULL,
	`case_id` text NOT NULL,
	`expert_id` text,
	`round` integer NOT NULL,
	`diagnosis` text NOT NULL,
	`root_cause` text NOT NULL,
	`recommended_fix` text NOT NULL,
	`tests_to_confirm` text NOT NULL,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`expert_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `case_answer_case_idx` ON `case_answer` (`case_id`);--> statement-breakpoint
CREATE TABLE `case_confirmation` (
	`id` text PRIMARY KEY NOT NULL,
	`case_id` text NOT NULL,
	`answer_id` text,
	`user_id` text,
	`expert_id` text,
	`fixed` integer NOT NULL,
	`note` text,
	`rating` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `case_confirmation_case_idx` ON `case_confirmation` (`case_id`);--> statement-breakpoint
CREATE INDEX `case_confirmation_expert_idx` ON `case_confirmation` (`expert_id`);--> statement-breakpoint
CREATE TABLE `case_offer` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`case_id` text NOT NULL,
	`expert_id` text NOT NULL,
	`wave` integer NOT NULL,
	`rank` integer NOT NULL,
	`score` real NOT NULL,
	`reason` text,
	`offered_at` integer NOT NULL,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`expert_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `case_offer_unique` ON `case_offer` (`case_id`,`expert_id`);--> statement-breakpoint
CREATE INDEX `case_offer_expert_idx` ON `case_offer` (`expert_id`);--> statement-breakpoint
CREATE TABLE `case_queue_state` (
	`case_id` text PRIMARY KEY NOT NULL,
	`payment_id` text,
	`queued_at` integer,
	`offers_widened_at` integer,
	`deadline_warned_at` integer,
	`needs_data_since` integer,
	`needs_data_message` text,
	`not_fixed_count` integer DEFAULT 0 NOT NULL,
	`answered_at` integer,
	`last_payment_error` text,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `desk_settings` (
	`id` integer PRIMARY KEY NOT NULL,
	`currency` text DEFAULT 'usd' NOT NULL,
	`desk_share_bp` integer DEFAULT 2000 NOT NULL,
	`first_wave_size` integer DEFAULT 3 NOT NULL,
	`widen_after_minutes` integer DEFAULT 30 NOT NULL,
	`close_answered_after_days` integer DEFAULT 7 NOT NULL,
	`updated_by` text,
	`updated_at` integer NOT NULL
);
--> statement-breakpoint
CREATE TABLE `ledger_entry` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`key` text NOT NULL,
	`kind` text NOT NULL,
	`amount_cents` integer NOT NULL,
	`currency` text NOT NULL,
	`case_id` text,
	`payment_id` text,
	`expert_id` text,
	`payout_id` text,
	`stripe_id` text,
	`note` text,
	`at` integer NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `ledger_entry_key_unique` ON `ledger_entry` (`key`);--> statement-breakpoint
CREATE INDEX `ledger_case_idx` ON `ledger_entry` (`case_id`);--> statement-breakpoint
CREATE INDEX `ledger_expert_idx` ON `ledger_entry` (`expert_id`,`kind`);--> statement-breakpoint
CREATE INDEX `ledger_payment_idx` ON `ledger_entry` (`payment_id`);--> statement-breakpoint
CREATE TABLE `notification` (
	`id` text PRIMARY KEY NOT NULL,
	`user_id` text NOT NULL,
	`kind` text NOT NULL,
	`case_id` text,
	`title` text NOT NULL,
	`body` text NOT NULL,
	`link` text,
	`read_at` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `notification_user_idx` ON `notification` (`user_id`,`created_at`);--> statement-breakpoint
CREATE TABLE `payment` (
	`id` text PRIMARY KEY NOT NULL,
	`case_id` text NOT NULL,
	`shop_id` text NOT NULL,
	`tier` text NOT NULL,
	`tier_label` text NOT NULL,
	`amount_cents` integer NOT NULL,
	`currency` text NOT NULL,
	`desk_share_bp` integer NOT NULL,
	`deadline_minutes` integer NOT NULL,
	`status` text NOT NULL,
	`checkout_session_id` text,
	`checkout_url` text,
	`payment_intent_id` text,
	`charge_id` text,
	`card_last4` text,
	`card_brand` text,
	`capture_before` integer,
	`failure_code` text,
	`failure_message` text,
	`created_by` text,
	`authorized_at` integer,
	`captured_at` integer,
	`released_at` integer,
	`refunded_at` integer,
	`created_at` integer NOT NULL,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`case_id`) REFERENCES `case`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`shop_id`) REFERENCES `shop`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `payment_checkout_session_id_unique` ON `payment` (`checkout_session_id`);--> statement-breakpoint
CREATE UNIQUE INDEX `payment_payment_intent_id_unique` ON `payment` (`payment_intent_id`);--> statement-breakpoint
CREATE INDEX `payment_case_idx` ON `payment` (`case_id`);--> statement-breakpoint
CREATE INDEX `payment_shop_idx` ON `payment` (`shop_id`,`created_at`);--> statement-breakpoint
CREATE TABLE `payout` (
	`id` text PRIMARY KEY NOT NULL,
	`expert_id` text NOT NULL,
	`amount_cents` integer NOT NULL,
	`currency` text NOT NULL,
	`status` text NOT NULL,
	`stripe_account_id` text,
	`stripe_transfer_id` text,
	`failure_message` text,
	`created_by` text,
	`created_at` integer NOT NULL,
	`paid_at` integer,
	FOREIGN KEY (`expert_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `payout_stripe_transfer_id_unique` ON `payout` (`stripe_transfer_id`);--> statement-breakpoint
CREATE INDEX `payout_expert_idx` ON `payout` (`expert_id`,`created_at`);--> statement-breakpoint
CREATE TABLE `pricing_tier` (
	`id` text PRIMARY KEY NOT NULL,
	`label` text NOT NULL,
	`description` text,
	`price_cents` integer NOT NULL,
	`deadline_minutes` integer NOT NULL,
	`active` integer DEFAULT true NOT NULL,
	`sort_order` integer DEFAULT 0 NOT NULL,
	`updated_by` text,
	`updated_at` integer NOT NULL
);
--> statement-breakpoint
CREATE TABLE `stripe_event` (
	`id` text PRIMARY KEY NOT NULL,
	`type` text NOT NULL,
	`object_id` text,
	`outcome` text NOT NULL,
	`received_at` integer NOT NULL
);
