CREATE TABLE `bag_reworks` (
	`id` int AUTO_INCREMENT NOT NULL,
	`bag_id` int NOT NULL,
	`from_revision_id` int NOT NULL,
	`to_revision_id` int NOT NULL,
	`decision` enum('reworked','kept') NOT NULL,
	`added` json NOT NULL,
	`removed` json NOT NULL,
	`user_id` int,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `bag_reworks_id` PRIMARY KEY(`id`),
	CONSTRAINT `bag_reworks_bag_to_uq` UNIQUE(`bag_id`,`to_revision_id`)
);
--> statement-breakpoint
CREATE TABLE `report_events` (
	`id` int AUTO_INCREMENT NOT NULL,
	`report_id` int NOT NULL,
	`state` enum('open','handling','resolved','declined') NOT NULL,
	`resolution` enum('handed-out','replaced','not-needed'),
	`note` varchar(500),
	`user_id` int,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `report_events_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
ALTER TABLE `bag_reworks` ADD CONSTRAINT `bag_reworks_bag_id_bags_id_fk` FOREIGN KEY (`bag_id`) REFERENCES `bags`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bag_reworks` ADD CONSTRAINT `bag_reworks_from_revision_id_revisions_id_fk` FOREIGN KEY (`from_revision_id`) REFERENCES `revisions`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bag_reworks` ADD CONSTRAINT `bag_reworks_to_revision_id_revisions_id_fk` FOREIGN KEY (`to_revision_id`) REFERENCES `revisions`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bag_reworks` ADD CONSTRAINT `bag_reworks_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `report_events` ADD CONSTRAINT `report_events_report_id_reports_id_fk` FOREIGN KEY (`report_id`) REFERENCES `reports`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `report_events` ADD CONSTRAINT `report_events_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `report_events_report_idx` ON `report_events` (`report_id`);