CREATE TABLE `mail_stops` (
	`email` varchar(254) NOT NULL,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `mail_stops_email` PRIMARY KEY(`email`)
);
--> statement-breakpoint
CREATE INDEX `notices_to_status_idx` ON `notices` (`to_email`,`status`);--> statement-breakpoint
CREATE INDEX `notices_claim_idx` ON `notices` (`claim_token`);