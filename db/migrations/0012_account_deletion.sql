CREATE TABLE `object_deletions` (
	`object_key` varchar(200) NOT NULL,
	`attempts` int NOT NULL DEFAULT 0,
	`next_attempt_at` timestamp(3) NOT NULL DEFAULT (now()),
	`last_error` varchar(500),
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `object_deletions_object_key` PRIMARY KEY(`object_key`)
);
--> statement-breakpoint
ALTER TABLE `clubs` DROP FOREIGN KEY `clubs_created_by_users_id_fk`;
--> statement-breakpoint
ALTER TABLE `comments` DROP FOREIGN KEY `comments_author_id_users_id_fk`;
--> statement-breakpoint
ALTER TABLE `invites` DROP FOREIGN KEY `invites_invited_by_users_id_fk`;
--> statement-breakpoint
ALTER TABLE `shares` DROP FOREIGN KEY `shares_verdict_by_users_id_fk`;
--> statement-breakpoint
ALTER TABLE `auth_tokens` MODIFY COLUMN `purpose` enum('verify','reset','signin','delete') NOT NULL;--> statement-breakpoint
ALTER TABLE `clubs` MODIFY COLUMN `created_by` char(36);--> statement-breakpoint
ALTER TABLE `comments` MODIFY COLUMN `author_id` char(36);--> statement-breakpoint
ALTER TABLE `invites` MODIFY COLUMN `invited_by` char(36);--> statement-breakpoint
CREATE INDEX `object_deletions_next_idx` ON `object_deletions` (`next_attempt_at`);--> statement-breakpoint
ALTER TABLE `clubs` ADD CONSTRAINT `clubs_created_by_users_id_fk` FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `comments` ADD CONSTRAINT `comments_author_id_users_id_fk` FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `invites` ADD CONSTRAINT `invites_invited_by_users_id_fk` FOREIGN KEY (`invited_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `shares` ADD CONSTRAINT `shares_verdict_by_users_id_fk` FOREIGN KEY (`verdict_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;