CREATE TABLE `analysis_feature_files` (
	`analysis_id` text PRIMARY KEY NOT NULL,
	`file` text NOT NULL,
	`count` integer NOT NULL,
	`bytes` integer NOT NULL,
	FOREIGN KEY (`analysis_id`) REFERENCES `analyses`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `team_limits` (
	`team_id` text PRIMARY KEY NOT NULL,
	`max_polygons` integer NOT NULL,
	`max_points` integer NOT NULL,
	`max_analysis_bytes` integer NOT NULL,
	`max_stored_bytes` integer NOT NULL,
	`updated_by` text,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`team_id`) REFERENCES `teams`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`updated_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
