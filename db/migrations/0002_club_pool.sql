CREATE TABLE `borrow_requests` (
	`id` char(36) NOT NULL,
	`offer_id` char(36) NOT NULL,
	`borrower_id` char(36) NOT NULL,
	`lender_id` char(36) NOT NULL,
	`check_id` char(36),
	`size` decimal(8,5) NOT NULL,
	`count` int NOT NULL,
	`state` enum('asked','agreed','declined','withdrawn','handed-over','giving-back','settled') NOT NULL DEFAULT 'asked',
	`return_size` decimal(8,5),
	`version` bigint unsigned NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `borrow_requests_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `pool_offers` (
	`id` char(36) NOT NULL,
	`club_id` char(36) NOT NULL,
	`owner_id` char(36) NOT NULL,
	`size` decimal(8,5) NOT NULL,
	`measured_size` boolean NOT NULL DEFAULT false,
	`count` int NOT NULL,
	`shim_diameter` decimal(8,5),
	`note` varchar(200),
	`withdrawn_at` timestamp(3),
	`version` bigint unsigned NOT NULL DEFAULT 0,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	`updated_at` timestamp(3) NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `pool_offers_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
ALTER TABLE `borrow_requests` ADD CONSTRAINT `borrow_requests_offer_id_pool_offers_id_fk` FOREIGN KEY (`offer_id`) REFERENCES `pool_offers`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `borrow_requests` ADD CONSTRAINT `borrow_requests_borrower_id_users_id_fk` FOREIGN KEY (`borrower_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `borrow_requests` ADD CONSTRAINT `borrow_requests_lender_id_users_id_fk` FOREIGN KEY (`lender_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `borrow_requests` ADD CONSTRAINT `borrow_requests_check_id_checks_id_fk` FOREIGN KEY (`check_id`) REFERENCES `checks`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `pool_offers` ADD CONSTRAINT `pool_offers_club_id_clubs_id_fk` FOREIGN KEY (`club_id`) REFERENCES `clubs`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `pool_offers` ADD CONSTRAINT `pool_offers_owner_id_users_id_fk` FOREIGN KEY (`owner_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `borrow_requests_offer_idx` ON `borrow_requests` (`offer_id`,`state`);--> statement-breakpoint
CREATE INDEX `borrow_requests_borrower_idx` ON `borrow_requests` (`borrower_id`);--> statement-breakpoint
CREATE INDEX `borrow_requests_lender_idx` ON `borrow_requests` (`lender_id`);--> statement-breakpoint
CREATE INDEX `pool_offers_club_idx` ON `pool_offers` (`club_id`,`withdrawn_at`);--> statement-breakpoint
CREATE INDEX `pool_offers_owner_idx` ON `pool_offers` (`owner_id`);