CREATE TABLE `owner_versions` (
	`owner_id` char(36) NOT NULL,
	`version` bigint unsigned NOT NULL DEFAULT 0,
	CONSTRAINT `owner_versions_owner_id` PRIMARY KEY(`owner_id`)
);
--> statement-breakpoint
-- every existing row carries a value of the old global counter: each owner's counter starts above them all
INSERT INTO `owner_versions` (`owner_id`, `version`) SELECT `id`, (SELECT COALESCE(MAX(`version`), 0) FROM `change_versions`) FROM `users`;--> statement-breakpoint
DROP TABLE `change_versions`;--> statement-breakpoint
ALTER TABLE `clubs` ADD `role_changes` int DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE `pool_offers` ADD `asks` int DEFAULT 0 NOT NULL;