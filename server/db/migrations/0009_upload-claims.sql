CREATE TABLE `upload_claim` (
	`upload_id` text PRIMARY KEY NOT NULL,
	`claimed_by` text NOT NULL,
	`claimed_at` integer NOT NULL,
	`trace_id` text
);
