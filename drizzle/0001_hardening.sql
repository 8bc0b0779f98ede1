CREATE TABLE `auth_throttle` (
	`scope` text NOT NULL,
	`key` text NOT NULL,
	`count` integer NOT NULL,
	`last_at` integer NOT NULL,
	`blocked_until` integer NOT NULL,
	PRIMARY KEY(`scope`, `key`)
);
--> statement-breakpoint
CREATE INDEX `auth_throttle_last_idx` ON `auth_throttle` (`last_at`);--> statement-breakpoint
CREATE TABLE `known_sign_in_addresses` (
	`email` text NOT NULL,
	`address` text NOT NULL,
	`last_sign_in_at` integer NOT NULL,
	PRIMARY KEY(`email`, `address`)
);
--> statement-breakpoint
-- Session ids are stored as SHA-256 hashes from now on (lib/auth/hashed-session-adapter.ts); rows holding plain ids
-- can never match again, so every existing session ends here and people sign in once more.
DELETE FROM `sessions`;