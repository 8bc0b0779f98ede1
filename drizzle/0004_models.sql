CREATE TABLE `process_model_versions` (
	`id` text PRIMARY KEY NOT NULL,
	`model_id` text NOT NULL,
	`number` integer NOT NULL,
	`status` text NOT NULL,
	`document` text NOT NULL,
	`calibration` text,
	`note` text DEFAULT '' NOT NULL,
	`based_on_version_id` text,
	`created_by` text,
	`created_at` integer NOT NULL,
	`updated_at` integer NOT NULL,
	`published_by` text,
	`published_at` integer,
	FOREIGN KEY (`model_id`) REFERENCES `process_models`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`published_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `process_model_versions_number_idx` ON `process_model_versions` (`model_id`,`number`);--> statement-breakpoint
CREATE INDEX `process_model_versions_model_idx` ON `process_model_versions` (`model_id`);--> statement-breakpoint
CREATE TABLE `process_models` (
	`id` text PRIMARY KEY NOT NULL,
	`team_id` text NOT NULL,
	`key` text NOT NULL,
	`name` text NOT NULL,
	`description` text DEFAULT '' NOT NULL,
	`feature_kind` text DEFAULT 'trench' NOT NULL,
	`created_by` text,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`team_id`) REFERENCES `teams`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `process_models_team_key_idx` ON `process_models` (`team_id`,`key`);--> statement-breakpoint
CREATE INDEX `process_models_team_idx` ON `process_models` (`team_id`);--> statement-breakpoint
CREATE TABLE `rule_sets` (
	`id` text PRIMARY KEY NOT NULL,
	`team_id` text NOT NULL,
	`name` text NOT NULL,
	`description` text DEFAULT '' NOT NULL,
	`rules` text NOT NULL,
	`is_default` integer DEFAULT false NOT NULL,
	`archived` integer DEFAULT false NOT NULL,
	`created_by` text,
	`created_at` integer NOT NULL,
	`updated_by` text,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`team_id`) REFERENCES `teams`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`updated_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `rule_sets_team_name_idx` ON `rule_sets` (`team_id`,`name`);--> statement-breakpoint
CREATE INDEX `rule_sets_team_idx` ON `rule_sets` (`team_id`);--> statement-breakpoint
ALTER TABLE `analyses` ADD `model_version_id` text;--> statement-breakpoint
ALTER TABLE `analyses` ADD `rule_set_id` text;--> statement-breakpoint
ALTER TABLE `analysis_features` ADD `depth_sigma_um` real;--> statement-breakpoint
ALTER TABLE `analysis_flags` ADD `uncertain` integer;