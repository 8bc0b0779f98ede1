CREATE TABLE `sessions` (
	`id` text PRIMARY KEY NOT NULL,
	`user_id` text NOT NULL,
	`expires_at` integer NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `users` (
	`id` text PRIMARY KEY NOT NULL,
	`email` text NOT NULL,
	`name` text NOT NULL,
	`password_hash` text NOT NULL,
	`created_at` integer NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `users_email_unique` ON `users` (`email`);--> statement-breakpoint
CREATE TABLE `invites` (
	`id` text PRIMARY KEY NOT NULL,
	`team_id` text NOT NULL,
	`email` text NOT NULL,
	`role` text NOT NULL,
	`token_hash` text NOT NULL,
	`invited_by` text,
	`created_at` integer NOT NULL,
	`expires_at` integer NOT NULL,
	`accepted_at` integer,
	FOREIGN KEY (`team_id`) REFERENCES `teams`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`invited_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `invites_token_idx` ON `invites` (`token_hash`);--> statement-breakpoint
CREATE INDEX `invites_team_idx` ON `invites` (`team_id`);--> statement-breakpoint
CREATE TABLE `memberships` (
	`team_id` text NOT NULL,
	`user_id` text NOT NULL,
	`role` text NOT NULL,
	`created_at` integer NOT NULL,
	PRIMARY KEY(`team_id`, `user_id`),
	FOREIGN KEY (`team_id`) REFERENCES `teams`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `memberships_user_idx` ON `memberships` (`user_id`);--> statement-breakpoint
CREATE TABLE `projects` (
	`id` text PRIMARY KEY NOT NULL,
	`team_id` text NOT NULL,
	`name` text NOT NULL,
	`description` text DEFAULT '' NOT NULL,
	`created_by` text,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`team_id`) REFERENCES `teams`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `projects_team_idx` ON `projects` (`team_id`);--> statement-breakpoint
CREATE UNIQUE INDEX `projects_team_name_idx` ON `projects` (`team_id`,`name`);--> statement-breakpoint
CREATE TABLE `teams` (
	`id` text PRIMARY KEY NOT NULL,
	`name` text NOT NULL,
	`created_at` integer NOT NULL
);
--> statement-breakpoint
CREATE TABLE `audit_log` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`at` integer NOT NULL,
	`actor_id` text,
	`team_id` text,
	`action` text NOT NULL,
	`target` text,
	`detail` text
);
--> statement-breakpoint
CREATE INDEX `audit_team_idx` ON `audit_log` (`team_id`,`at`);--> statement-breakpoint
CREATE TABLE `outbox` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`received_at` integer NOT NULL,
	`team_id` text,
	`from_address` text NOT NULL,
	`to_addresses` text NOT NULL,
	`subject` text NOT NULL,
	`body` text NOT NULL,
	`raw` text NOT NULL
);
--> statement-breakpoint
CREATE INDEX `outbox_team_idx` ON `outbox` (`team_id`,`received_at`);--> statement-breakpoint
CREATE TABLE `api_tokens` (
	`id` text PRIMARY KEY NOT NULL,
	`user_id` text NOT NULL,
	`team_id` text NOT NULL,
	`name` text NOT NULL,
	`prefix` text NOT NULL,
	`token_hash` text NOT NULL,
	`created_at` integer NOT NULL,
	`last_used_at` integer,
	`revoked_at` integer,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`team_id`) REFERENCES `teams`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `api_tokens_hash_idx` ON `api_tokens` (`token_hash`);--> statement-breakpoint
CREATE INDEX `api_tokens_user_idx` ON `api_tokens` (`user_id`);--> statement-breakpoint
CREATE TABLE `analyses` (
	`id` text PRIMARY KEY NOT NULL,
	`project_id` text NOT NULL,
	`revision_id` text NOT NULL,
	`created_by` text,
	`created_at` integer NOT NULL,
	`settings` text NOT NULL,
	`model` text NOT NULL,
	`model_name` text NOT NULL,
	`model_version` text NOT NULL,
	`model_source` text NOT NULL,
	`status` text NOT NULL,
	`stage` text,
	`progress` real DEFAULT 0 NOT NULL,
	`error_code` text,
	`error_message` text,
	`attempts` integer DEFAULT 0 NOT NULL,
	`started_at` integer,
	`finished_at` integer,
	`summary` text,
	`result_dir` text,
	FOREIGN KEY (`project_id`) REFERENCES `projects`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`revision_id`) REFERENCES `layout_revisions`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `analyses_project_idx` ON `analyses` (`project_id`,`created_at`);--> statement-breakpoint
CREATE INDEX `analyses_revision_idx` ON `analyses` (`revision_id`);--> statement-breakpoint
CREATE INDEX `analyses_status_idx` ON `analyses` (`status`,`created_at`);--> statement-breakpoint
CREATE TABLE `analysis_features` (
	`analysis_id` text NOT NULL,
	`feature_id` integer NOT NULL,
	`shape` text NOT NULL,
	`model_kind` text NOT NULL,
	`x_um` real NOT NULL,
	`y_um` real NOT NULL,
	`x0_um` real NOT NULL,
	`y0_um` real NOT NULL,
	`x1_um` real NOT NULL,
	`y1_um` real NOT NULL,
	`area_um2` real NOT NULL,
	`width_um` real NOT NULL,
	`length_um` real NOT NULL,
	`effective_density` real NOT NULL,
	`depth_um` real NOT NULL,
	`aspect_ratio` real NOT NULL,
	`margin_um` real NOT NULL,
	`over_etch_um` real NOT NULL,
	`reaches_target` integer NOT NULL,
	`warnings` text DEFAULT '' NOT NULL,
	PRIMARY KEY(`analysis_id`, `feature_id`),
	FOREIGN KEY (`analysis_id`) REFERENCES `analyses`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `analysis_flags` (
	`id` text PRIMARY KEY NOT NULL,
	`analysis_id` text NOT NULL,
	`flag_key` text NOT NULL,
	`rank` integer NOT NULL,
	`kind` text NOT NULL,
	`severity` text NOT NULL,
	`x0_um` real NOT NULL,
	`y0_um` real NOT NULL,
	`x1_um` real NOT NULL,
	`y1_um` real NOT NULL,
	`x_um` real NOT NULL,
	`y_um` real NOT NULL,
	`measured` real NOT NULL,
	`limit_value` real NOT NULL,
	`unit` text NOT NULL,
	`message` text NOT NULL,
	`feature_id` integer,
	`window_um` real,
	`step_um` real,
	FOREIGN KEY (`analysis_id`) REFERENCES `analyses`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `analysis_flags_key_idx` ON `analysis_flags` (`analysis_id`,`flag_key`);--> statement-breakpoint
CREATE INDEX `analysis_flags_rank_idx` ON `analysis_flags` (`analysis_id`,`rank`);--> statement-breakpoint
CREATE TABLE `analysis_maps` (
	`analysis_id` text NOT NULL,
	`name` text NOT NULL,
	`kind` text NOT NULL,
	`unit` text NOT NULL,
	`file` text NOT NULL,
	`x0_um` real NOT NULL,
	`y0_um` real NOT NULL,
	`pixel_um` real NOT NULL,
	`nx` integer NOT NULL,
	`ny` integer NOT NULL,
	`meta` text NOT NULL,
	`bytes` integer NOT NULL,
	PRIMARY KEY(`analysis_id`, `name`),
	FOREIGN KEY (`analysis_id`) REFERENCES `analyses`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `layout_revisions` (
	`id` text PRIMARY KEY NOT NULL,
	`layout_id` text NOT NULL,
	`revision` integer NOT NULL,
	`uploaded_by` text,
	`uploaded_at` integer NOT NULL,
	`original_name` text NOT NULL,
	`sha256` text NOT NULL,
	`size_bytes` integer NOT NULL,
	`format` text NOT NULL,
	`stored_path` text NOT NULL,
	`layer_table` text NOT NULL,
	`top_cell` text NOT NULL,
	`library_name` text NOT NULL,
	`dbu_um` real NOT NULL,
	`bbox_dbu` text,
	`polygon_count` integer NOT NULL,
	`note` text DEFAULT '' NOT NULL,
	FOREIGN KEY (`layout_id`) REFERENCES `layouts`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`uploaded_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `layout_revisions_layout_rev_idx` ON `layout_revisions` (`layout_id`,`revision`);--> statement-breakpoint
CREATE TABLE `layouts` (
	`id` text PRIMARY KEY NOT NULL,
	`project_id` text NOT NULL,
	`name` text NOT NULL,
	`created_by` text,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`project_id`) REFERENCES `projects`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `layouts_project_name_idx` ON `layouts` (`project_id`,`name`);