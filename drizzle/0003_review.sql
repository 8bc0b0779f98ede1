CREATE TABLE `analysis_signoffs` (
	`analysis_id` text PRIMARY KEY NOT NULL,
	`signed_by` text,
	`signed_by_name` text NOT NULL,
	`signed_at` integer NOT NULL,
	`model_name` text NOT NULL,
	`model_version` text NOT NULL,
	`calibration_date` text,
	`note` text DEFAULT '' NOT NULL,
	`counts` text NOT NULL,
	FOREIGN KEY (`analysis_id`) REFERENCES `analyses`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`signed_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE TABLE `finding_events` (
	`id` text PRIMARY KEY NOT NULL,
	`analysis_id` text NOT NULL,
	`flag_key` text NOT NULL,
	`type` text NOT NULL,
	`at` integer NOT NULL,
	`actor_id` text,
	`actor_name` text NOT NULL,
	`from_status` text,
	`to_status` text,
	`assignee_id` text,
	`assignee_name` text,
	`body` text DEFAULT '' NOT NULL,
	`mentions` text DEFAULT '[]' NOT NULL,
	FOREIGN KEY (`analysis_id`) REFERENCES `analyses`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`actor_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `finding_events_flag_idx` ON `finding_events` (`analysis_id`,`flag_key`,`at`);--> statement-breakpoint
CREATE TABLE `finding_reviews` (
	`analysis_id` text NOT NULL,
	`flag_key` text NOT NULL,
	`status` text DEFAULT 'open' NOT NULL,
	`assignee_id` text,
	`waiver_reason` text,
	`waiver_approver_id` text,
	`waiver_approver_name` text,
	`waived_at` integer,
	`carried_from_analysis_id` text,
	`carried_note` text,
	`updated_at` integer NOT NULL,
	`updated_by` text,
	PRIMARY KEY(`analysis_id`, `flag_key`),
	FOREIGN KEY (`analysis_id`) REFERENCES `analyses`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`assignee_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`waiver_approver_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`updated_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `finding_reviews_assignee_idx` ON `finding_reviews` (`assignee_id`);--> statement-breakpoint
CREATE TABLE `notification_prefs` (
	`user_id` text PRIMARY KEY NOT NULL,
	`email_assignment` integer DEFAULT true NOT NULL,
	`email_mention` integer DEFAULT true NOT NULL,
	`email_status` integer DEFAULT true NOT NULL,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `notifications` (
	`id` text PRIMARY KEY NOT NULL,
	`user_id` text NOT NULL,
	`team_id` text,
	`kind` text NOT NULL,
	`at` integer NOT NULL,
	`actor_name` text NOT NULL,
	`analysis_id` text,
	`flag_key` text,
	`title` text NOT NULL,
	`body` text DEFAULT '' NOT NULL,
	`read_at` integer,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`team_id`) REFERENCES `teams`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`analysis_id`) REFERENCES `analyses`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `notifications_user_idx` ON `notifications` (`user_id`,`read_at`,`at`);