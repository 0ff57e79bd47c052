ALTER TABLE `notices` MODIFY COLUMN `status` enum('queued','sending','sent','failed','dropped') NOT NULL DEFAULT 'queued';--> statement-breakpoint
ALTER TABLE `notices` ADD `about_check_id` char(36);--> statement-breakpoint
ALTER TABLE `notices` ADD CONSTRAINT `notices_about_check_id_checks_id_fk` FOREIGN KEY (`about_check_id`) REFERENCES `checks`(`id`) ON DELETE cascade ON UPDATE no action;