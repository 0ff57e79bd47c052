CREATE TABLE `auth_tokens` (
	`id` char(36) NOT NULL,
	`user_id` char(36) NOT NULL,
	`purpose` enum('verify','reset','signin') NOT NULL,
	`token_hash` char(64) NOT NULL,
	`expires_at` timestamp(3) NOT NULL,
	`used_at` timestamp(3),
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `auth_tokens_id` PRIMARY KEY(`id`),
	CONSTRAINT `auth_tokens_hash_uq` UNIQUE(`token_hash`)
);
--> statement-breakpoint
CREATE TABLE `change_versions` (
	`version` bigint unsigned AUTO_INCREMENT NOT NULL,
	`at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `change_versions_version` PRIMARY KEY(`version`)
);
--> statement-breakpoint
CREATE TABLE `checks` (
	`id` char(36) NOT NULL,
	`engine_id` char(36) NOT NULL,
	`owner_id` char(36) NOT NULL,
	`odometer` decimal(10,1) NOT NULL,
	`measured_hot` boolean NOT NULL DEFAULT false,
	`status` enum('measuring','planned','fitting','verifying','closed') NOT NULL DEFAULT 'measuring',
	`notes` text,
	`started_at` timestamp(3) NOT NULL DEFAULT (now()),
	`closed_at` timestamp(3),
	`version` bigint unsigned NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `checks_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `clubs` (
	`id` char(36) NOT NULL,
	`name` varchar(120) NOT NULL,
	`created_by` char(36) NOT NULL,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `clubs_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `comments` (
	`id` char(36) NOT NULL,
	`check_id` char(36) NOT NULL,
	`author_id` char(36) NOT NULL,
	`valve` varchar(16),
	`body` text NOT NULL,
	`version` bigint unsigned NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `comments_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `engines` (
	`id` char(36) NOT NULL,
	`owner_id` char(36) NOT NULL,
	`name` varchar(120) NOT NULL,
	`cylinders` smallint NOT NULL,
	`intake_per_cylinder` smallint NOT NULL,
	`exhaust_per_cylinder` smallint NOT NULL,
	`firing_order` json NOT NULL,
	`firing_angles` json,
	`ivo` smallint NOT NULL DEFAULT 20,
	`ivc` smallint NOT NULL DEFAULT 50,
	`evo` smallint NOT NULL DEFAULT 50,
	`evc` smallint NOT NULL DEFAULT 20,
	`intake_min` decimal(8,5) NOT NULL,
	`intake_max` decimal(8,5) NOT NULL,
	`intake_target` decimal(8,5),
	`exhaust_min` decimal(8,5) NOT NULL,
	`exhaust_max` decimal(8,5) NOT NULL,
	`exhaust_target` decimal(8,5),
	`measured_hot` boolean NOT NULL DEFAULT false,
	`shim_min` decimal(8,5),
	`shim_max` decimal(8,5),
	`shim_step` decimal(8,5),
	`shim_sizes` json,
	`shim_diameter` decimal(8,5),
	`assembled_shim` decimal(8,5),
	`display_unit` enum('mm','in') NOT NULL DEFAULT 'mm',
	`odometer_unit` enum('km','mi','h') NOT NULL DEFAULT 'km',
	`mirrored` boolean NOT NULL DEFAULT false,
	`version` bigint unsigned NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `engines_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `invites` (
	`id` char(36) NOT NULL,
	`club_id` char(36) NOT NULL,
	`email` varchar(254) NOT NULL,
	`role` enum('mechanic','mentor','admin') NOT NULL DEFAULT 'mechanic',
	`token_hash` char(64) NOT NULL,
	`invited_by` char(36) NOT NULL,
	`expires_at` timestamp(3) NOT NULL,
	`accepted_at` timestamp(3),
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `invites_id` PRIMARY KEY(`id`),
	CONSTRAINT `invites_token_uq` UNIQUE(`token_hash`)
);
--> statement-breakpoint
CREATE TABLE `memberships` (
	`id` char(36) NOT NULL,
	`club_id` char(36) NOT NULL,
	`user_id` char(36) NOT NULL,
	`role` enum('mechanic','mentor','admin') NOT NULL,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `memberships_id` PRIMARY KEY(`id`),
	CONSTRAINT `memberships_club_user_role_uq` UNIQUE(`club_id`,`user_id`,`role`)
);
--> statement-breakpoint
CREATE TABLE `notices` (
	`id` char(36) NOT NULL,
	`to_user_id` char(36),
	`to_email` varchar(254) NOT NULL,
	`kind` varchar(40) NOT NULL,
	`subject` varchar(200) NOT NULL,
	`body` text NOT NULL,
	`status` enum('queued','sending','sent','failed') NOT NULL DEFAULT 'queued',
	`claim_token` char(36),
	`claimed_until` timestamp(3),
	`attempts` smallint NOT NULL DEFAULT 0,
	`next_attempt_at` timestamp(3) NOT NULL DEFAULT (now()),
	`last_error` varchar(500),
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `notices_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `reading_history` (
	`id` char(36) NOT NULL,
	`reading_id` char(36) NOT NULL,
	`previous` json NOT NULL,
	`replaced_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `reading_history_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `readings` (
	`id` char(36) NOT NULL,
	`check_id` char(36) NOT NULL,
	`owner_id` char(36) NOT NULL,
	`valve` varchar(16) NOT NULL,
	`round` smallint NOT NULL DEFAULT 0,
	`installed_stamp` decimal(8,5),
	`installed_micrometer` decimal(8,5),
	`feeler_go` decimal(8,5),
	`feeler_no_go` decimal(8,5),
	`measured` decimal(8,5),
	`method` enum('feeler','typed') NOT NULL DEFAULT 'feeler',
	`fitted_shim` decimal(8,5),
	`fitted_at` timestamp(3),
	`version` bigint unsigned NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `readings_id` PRIMARY KEY(`id`),
	CONSTRAINT `readings_check_valve_round_uq` UNIQUE(`check_id`,`valve`,`round`)
);
--> statement-breakpoint
CREATE TABLE `rejected_mutations` (
	`id` char(36) NOT NULL,
	`client_id` char(36) NOT NULL,
	`mutation_id` bigint unsigned NOT NULL,
	`name` varchar(60) NOT NULL,
	`reason` varchar(500) NOT NULL,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `rejected_mutations_id` PRIMARY KEY(`id`),
	CONSTRAINT `rejected_client_mutation_uq` UNIQUE(`client_id`,`mutation_id`)
);
--> statement-breakpoint
CREATE TABLE `shares` (
	`id` char(36) NOT NULL,
	`check_id` char(36) NOT NULL,
	`club_id` char(36) NOT NULL,
	`shared_by` char(36) NOT NULL,
	`verdict` enum('close-up','measure-again','stop-and-ask'),
	`verdict_by` char(36),
	`verdict_at` timestamp(3),
	`withdrawn_at` timestamp(3),
	`version` bigint unsigned NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `shares_id` PRIMARY KEY(`id`),
	CONSTRAINT `shares_check_club_uq` UNIQUE(`check_id`,`club_id`)
);
--> statement-breakpoint
CREATE TABLE `sign_in_attempts` (
	`id` char(36) NOT NULL,
	`attempt_key` varchar(300) NOT NULL,
	`at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `sign_in_attempts_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `sync_clients` (
	`id` char(36) NOT NULL,
	`user_id` char(36) NOT NULL,
	`last_mutation_id` bigint unsigned NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `sync_clients_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `tombstones` (
	`id` char(36) NOT NULL,
	`entity` varchar(30) NOT NULL,
	`entity_id` char(36) NOT NULL,
	`owner_id` char(36) NOT NULL,
	`version` bigint unsigned NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `tombstones_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `tray_items` (
	`id` char(36) NOT NULL,
	`owner_id` char(36) NOT NULL,
	`size` decimal(8,5) NOT NULL,
	`measured_size` boolean NOT NULL DEFAULT false,
	`count` int NOT NULL DEFAULT 0,
	`shim_diameter` decimal(8,5),
	`version` bigint unsigned NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `tray_items_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `uploads` (
	`id` char(36) NOT NULL,
	`owner_id` char(36) NOT NULL,
	`check_id` char(36) NOT NULL,
	`reading_id` char(36),
	`comment_id` char(36),
	`object_key` varchar(200) NOT NULL,
	`content_type` varchar(60) NOT NULL,
	`bytes` int NOT NULL,
	`width` smallint,
	`height` smallint,
	`version` bigint unsigned NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `uploads_id` PRIMARY KEY(`id`),
	CONSTRAINT `uploads_key_uq` UNIQUE(`object_key`)
);
--> statement-breakpoint
CREATE TABLE `users` (
	`id` char(36) NOT NULL,
	`email` varchar(254) NOT NULL,
	`name` varchar(120) NOT NULL,
	`password_hash` varchar(100),
	`email_verified_at` timestamp(3),
	`display_unit` enum('mm','in') NOT NULL DEFAULT 'mm',
	`notices_by_email` boolean NOT NULL DEFAULT true,
	`session_generation` int NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `users_id` PRIMARY KEY(`id`),
	CONSTRAINT `users_email_uq` UNIQUE(`email`)
);
--> statement-breakpoint
ALTER TABLE `auth_tokens` ADD CONSTRAINT `auth_tokens_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `checks` ADD CONSTRAINT `checks_engine_id_engines_id_fk` FOREIGN KEY (`engine_id`) REFERENCES `engines`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `checks` ADD CONSTRAINT `checks_owner_id_users_id_fk` FOREIGN KEY (`owner_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `clubs` ADD CONSTRAINT `clubs_created_by_users_id_fk` FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `comments` ADD CONSTRAINT `comments_check_id_checks_id_fk` FOREIGN KEY (`check_id`) REFERENCES `checks`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `comments` ADD CONSTRAINT `comments_author_id_users_id_fk` FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `engines` ADD CONSTRAINT `engines_owner_id_users_id_fk` FOREIGN KEY (`owner_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `invites` ADD CONSTRAINT `invites_club_id_clubs_id_fk` FOREIGN KEY (`club_id`) REFERENCES `clubs`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `invites` ADD CONSTRAINT `invites_invited_by_users_id_fk` FOREIGN KEY (`invited_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `memberships` ADD CONSTRAINT `memberships_club_id_clubs_id_fk` FOREIGN KEY (`club_id`) REFERENCES `clubs`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `memberships` ADD CONSTRAINT `memberships_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `notices` ADD CONSTRAINT `notices_to_user_id_users_id_fk` FOREIGN KEY (`to_user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `reading_history` ADD CONSTRAINT `reading_history_reading_id_readings_id_fk` FOREIGN KEY (`reading_id`) REFERENCES `readings`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `readings` ADD CONSTRAINT `readings_check_id_checks_id_fk` FOREIGN KEY (`check_id`) REFERENCES `checks`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `readings` ADD CONSTRAINT `readings_owner_id_users_id_fk` FOREIGN KEY (`owner_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `rejected_mutations` ADD CONSTRAINT `rejected_mutations_client_id_sync_clients_id_fk` FOREIGN KEY (`client_id`) REFERENCES `sync_clients`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `shares` ADD CONSTRAINT `shares_check_id_checks_id_fk` FOREIGN KEY (`check_id`) REFERENCES `checks`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `shares` ADD CONSTRAINT `shares_club_id_clubs_id_fk` FOREIGN KEY (`club_id`) REFERENCES `clubs`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `shares` ADD CONSTRAINT `shares_shared_by_users_id_fk` FOREIGN KEY (`shared_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `shares` ADD CONSTRAINT `shares_verdict_by_users_id_fk` FOREIGN KEY (`verdict_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `sync_clients` ADD CONSTRAINT `sync_clients_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `tray_items` ADD CONSTRAINT `tray_items_owner_id_users_id_fk` FOREIGN KEY (`owner_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `uploads` ADD CONSTRAINT `uploads_owner_id_users_id_fk` FOREIGN KEY (`owner_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `uploads` ADD CONSTRAINT `uploads_check_id_checks_id_fk` FOREIGN KEY (`check_id`) REFERENCES `checks`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `uploads` ADD CONSTRAINT `uploads_reading_id_readings_id_fk` FOREIGN KEY (`reading_id`) REFERENCES `readings`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `uploads` ADD CONSTRAINT `uploads_comment_id_comments_id_fk` FOREIGN KEY (`comment_id`) REFERENCES `comments`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `checks_engine_idx` ON `checks` (`engine_id`,`started_at`);--> statement-breakpoint
CREATE INDEX `checks_owner_idx` ON `checks` (`owner_id`,`version`);--> statement-breakpoint
CREATE INDEX `comments_check_idx` ON `comments` (`check_id`,`created_at`);--> statement-breakpoint
CREATE INDEX `engines_owner_idx` ON `engines` (`owner_id`,`version`);--> statement-breakpoint
CREATE INDEX `invites_club_idx` ON `invites` (`club_id`);--> statement-breakpoint
CREATE INDEX `memberships_user_idx` ON `memberships` (`user_id`);--> statement-breakpoint
CREATE INDEX `notices_status_next_idx` ON `notices` (`status`,`next_attempt_at`);--> statement-breakpoint
CREATE INDEX `reading_history_reading_idx` ON `reading_history` (`reading_id`);--> statement-breakpoint
CREATE INDEX `readings_owner_idx` ON `readings` (`owner_id`,`version`);--> statement-breakpoint
CREATE INDEX `shares_club_idx` ON `shares` (`club_id`,`created_at`);--> statement-breakpoint
CREATE INDEX `sign_in_attempts_key_at_idx` ON `sign_in_attempts` (`attempt_key`,`at`);--> statement-breakpoint
CREATE INDEX `sync_clients_user_idx` ON `sync_clients` (`user_id`);--> statement-breakpoint
CREATE INDEX `tombstones_owner_idx` ON `tombstones` (`owner_id`,`version`);--> statement-breakpoint
CREATE INDEX `tray_items_owner_idx` ON `tray_items` (`owner_id`,`version`);--> statement-breakpoint
CREATE INDEX `uploads_check_idx` ON `uploads` (`check_id`);