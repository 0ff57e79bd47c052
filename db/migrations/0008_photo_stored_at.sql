ALTER TABLE `uploads` ADD `stored_at` timestamp(3);--> statement-breakpoint
-- rows written before this change were written after their bytes were stored
UPDATE `uploads` SET `stored_at` = `created_at`;
