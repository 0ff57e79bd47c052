CREATE TABLE `club_log` (
	`id` char(36) NOT NULL,
	`club_id` char(36) NOT NULL,
	`actor_id` char(36),
	`action` enum('roles-changed','invite-sent','invite-withdrawn','invite-accepted','invites-ended') NOT NULL,
	`subject_user_id` char(36),
	`subject_email` varchar(254),
	`detail` varchar(200) NOT NULL DEFAULT '',
	`at` timestamp(3) NOT NULL DEFAULT (now()),
	`seq` bigint unsigned AUTO_INCREMENT NOT NULL,
	CONSTRAINT `club_log_id` PRIMARY KEY(`id`),
	CONSTRAINT `club_log_seq_uq` UNIQUE(`seq`)
);
--> statement-breakpoint
ALTER TABLE `invites` ADD `withdrawn_at` timestamp(3);--> statement-breakpoint
ALTER TABLE `club_log` ADD CONSTRAINT `club_log_club_id_clubs_id_fk` FOREIGN KEY (`club_id`) REFERENCES `clubs`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `club_log` ADD CONSTRAINT `club_log_actor_id_users_id_fk` FOREIGN KEY (`actor_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `club_log` ADD CONSTRAINT `club_log_subject_user_id_users_id_fk` FOREIGN KEY (`subject_user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `club_log_club_seq_idx` ON `club_log` (`club_id`,`seq`);