ALTER TABLE `comments` ADD `club_id` char(36);--> statement-breakpoint
ALTER TABLE `comments` ADD CONSTRAINT `comments_club_id_clubs_id_fk` FOREIGN KEY (`club_id`) REFERENCES `clubs`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
-- a mentor's earlier comments join the thread of the club through which they wrote them: the
-- earliest share with a club where they are a mentor, else the check's only share; left null
-- (seen by the owner and the author alone) when neither tells
UPDATE `comments` c JOIN `checks` ch ON ch.`id` = c.`check_id` SET c.`club_id` = COALESCE(
	(SELECT s.`club_id` FROM `shares` s JOIN `memberships` m ON m.`club_id` = s.`club_id` AND m.`user_id` = c.`author_id` AND m.`role` = 'mentor' WHERE s.`check_id` = c.`check_id` ORDER BY s.`created_at`, s.`id` LIMIT 1),
	(SELECT MIN(s.`club_id`) FROM `shares` s WHERE s.`check_id` = c.`check_id` HAVING COUNT(*) = 1)
) WHERE c.`author_id` <> ch.`owner_id`;
