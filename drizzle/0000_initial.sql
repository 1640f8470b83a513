CREATE TABLE `audit_log` (
	`id` int AUTO_INCREMENT NOT NULL,
	`user_id` int,
	`action` varchar(64) NOT NULL,
	`subject_type` varchar(32) NOT NULL,
	`subject_id` varchar(64),
	`detail` json,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `audit_log_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `auth_tokens` (
	`id` int AUTO_INCREMENT NOT NULL,
	`purpose` enum('invite','reset') NOT NULL,
	`token_hash` varchar(64) NOT NULL,
	`email` varchar(254) NOT NULL,
	`user_id` int,
	`roles` json,
	`created_by` int,
	`expires_at` timestamp NOT NULL,
	`used_at` timestamp,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `auth_tokens_id` PRIMARY KEY(`id`),
	CONSTRAINT `auth_tokens_hash_uq` UNIQUE(`token_hash`)
);
--> statement-breakpoint
CREATE TABLE `sign_in_failures` (
	`id` int AUTO_INCREMENT NOT NULL,
	`key` varchar(300) NOT NULL,
	`failed_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `sign_in_failures_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `user_roles` (
	`user_id` int NOT NULL,
	`role` enum('organiser','packer','builder') NOT NULL,
	CONSTRAINT `user_roles_user_id_role_pk` PRIMARY KEY(`user_id`,`role`)
);
--> statement-breakpoint
CREATE TABLE `users` (
	`id` int AUTO_INCREMENT NOT NULL,
	`email` varchar(254) NOT NULL,
	`name` varchar(120) NOT NULL,
	`password_hash` varchar(255) NOT NULL,
	`member` boolean NOT NULL DEFAULT true,
	`callsign` varchar(16),
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `users_id` PRIMARY KEY(`id`),
	CONSTRAINT `users_email_uq` UNIQUE(`email`)
);
--> statement-breakpoint
CREATE TABLE `parts` (
	`id` int AUTO_INCREMENT NOT NULL,
	`kind` enum('resistor','capacitor','inductor','crystal','diode','transistor','ic','connector','hardware','board','other') NOT NULL,
	`name` varchar(160) NOT NULL,
	`value` double,
	`unit` varchar(8),
	`value_text` varchar(64),
	`tolerance_pct` double,
	`power_w` double,
	`voltage_v` double,
	`current_a` double,
	`dielectric` varchar(24),
	`mounting` enum('tht','smd'),
	`polarised` boolean NOT NULL DEFAULT false,
	`package` varchar(64),
	`pinout_note` varchar(255),
	`description` text,
	`maker_part_number` varchar(64),
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `parts_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `swap_group_members` (
	`group_id` int NOT NULL,
	`part_id` int NOT NULL,
	`direction` enum('both','replaces','replaced') NOT NULL DEFAULT 'both',
	CONSTRAINT `swap_group_members_group_id_part_id_pk` PRIMARY KEY(`group_id`,`part_id`)
);
--> statement-breakpoint
CREATE TABLE `swap_groups` (
	`id` int AUTO_INCREMENT NOT NULL,
	`name` varchar(120) NOT NULL,
	`warning` varchar(255),
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `swap_groups_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `swap_settings` (
	`kind` varchar(24) NOT NULL,
	`enabled` boolean NOT NULL DEFAULT true,
	CONSTRAINT `swap_settings_kind` PRIMARY KEY(`kind`)
);
--> statement-breakpoint
CREATE TABLE `bom_lines` (
	`id` int AUTO_INCREMENT NOT NULL,
	`revision_id` int NOT NULL,
	`designators` text NOT NULL,
	`qty` int NOT NULL,
	`part_id` int,
	`value_text` varchar(160),
	`stage_id` int,
	`no_stand_ins` boolean NOT NULL DEFAULT false,
	`notes` varchar(500),
	`option_id` int,
	`replaces_line_id` int,
	`removes_line_id` int,
	`sort_order` int NOT NULL DEFAULT 0,
	CONSTRAINT `bom_lines_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `kits` (
	`id` int AUTO_INCREMENT NOT NULL,
	`name` varchar(120) NOT NULL,
	`slug` varchar(80) NOT NULL,
	`description` text,
	`designer_credit` varchar(255),
	`picture_key` varchar(255),
	`transmits` boolean NOT NULL DEFAULT false,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `kits_id` PRIMARY KEY(`id`),
	CONSTRAINT `kits_slug_uq` UNIQUE(`slug`)
);
--> statement-breakpoint
CREATE TABLE `option_groups` (
	`id` int AUTO_INCREMENT NOT NULL,
	`revision_id` int NOT NULL,
	`name` varchar(80) NOT NULL,
	`rule` enum('one','zero-or-one') NOT NULL DEFAULT 'one',
	`sort_order` int NOT NULL DEFAULT 0,
	CONSTRAINT `option_groups_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `options` (
	`id` int AUTO_INCREMENT NOT NULL,
	`group_id` int NOT NULL,
	`revision_id` int NOT NULL,
	`name` varchar(80) NOT NULL,
	`sort_order` int NOT NULL DEFAULT 0,
	CONSTRAINT `options_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `revisions` (
	`id` int AUTO_INCREMENT NOT NULL,
	`kit_id` int NOT NULL,
	`label` varchar(24) NOT NULL,
	`state` enum('draft','released','retired') NOT NULL DEFAULT 'draft',
	`parent_id` int,
	`notes` text,
	`released_at` timestamp,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `revisions_id` PRIMARY KEY(`id`),
	CONSTRAINT `revisions_kit_label_uq` UNIQUE(`kit_id`,`label`)
);
--> statement-breakpoint
CREATE TABLE `stages` (
	`id` int AUTO_INCREMENT NOT NULL,
	`revision_id` int NOT NULL,
	`name` varchar(80) NOT NULL,
	`sort_order` int NOT NULL DEFAULT 0,
	CONSTRAINT `stages_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `bins` (
	`id` int AUTO_INCREMENT NOT NULL,
	`code` varchar(24) NOT NULL,
	`place` varchar(160) NOT NULL DEFAULT '',
	`walk_order` int NOT NULL DEFAULT 0,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `bins_id` PRIMARY KEY(`id`),
	CONSTRAINT `bins_code_uq` UNIQUE(`code`)
);
--> statement-breakpoint
CREATE TABLE `ledger` (
	`id` int AUTO_INCREMENT NOT NULL,
	`lot_id` int NOT NULL,
	`part_id` int NOT NULL,
	`bin_id` int NOT NULL,
	`kind` enum('receive','move-out','move-in','pick','return','count','scrap','spares','rework') NOT NULL,
	`qty` int NOT NULL,
	`user_id` int,
	`reason` varchar(255),
	`order_id` int,
	`bag_id` int,
	`report_id` int,
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `ledger_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `lots` (
	`id` int AUTO_INCREMENT NOT NULL,
	`part_id` int NOT NULL,
	`bin_id` int NOT NULL,
	`qty_received` int NOT NULL,
	`on_hand` int NOT NULL DEFAULT 0,
	`unit_cost_minor` int NOT NULL DEFAULT 0,
	`currency` varchar(3) NOT NULL DEFAULT 'GBP',
	`supplier` varchar(120),
	`supplier_ref` varchar(120),
	`received_on` date NOT NULL,
	`note` varchar(500),
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `lots_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `supplier_offers` (
	`id` int AUTO_INCREMENT NOT NULL,
	`part_id` int NOT NULL,
	`supplier` varchar(120) NOT NULL,
	`supplier_ref` varchar(120),
	`currency` varchar(3) NOT NULL DEFAULT 'GBP',
	`min_qty` int NOT NULL DEFAULT 1,
	`pack_size` int NOT NULL DEFAULT 1,
	`breaks` json NOT NULL,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `supplier_offers_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `build_days` (
	`id` int AUTO_INCREMENT NOT NULL,
	`name` varchar(120) NOT NULL,
	`date` date NOT NULL,
	`venue` varchar(200) NOT NULL,
	`seats` int NOT NULL,
	`sales_open_at` timestamp NOT NULL,
	`sales_close_at` timestamp NOT NULL,
	`currency` varchar(3) NOT NULL DEFAULT 'GBP',
	`hold_minutes` int NOT NULL DEFAULT 30,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `build_days_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `offerings` (
	`id` int AUTO_INCREMENT NOT NULL,
	`build_day_id` int NOT NULL,
	`revision_id` int NOT NULL,
	`allowed_option_ids` json NOT NULL,
	`member_price_minor` int NOT NULL,
	`non_member_price_minor` int NOT NULL,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `offerings_id` PRIMARY KEY(`id`),
	CONSTRAINT `offerings_day_rev_uq` UNIQUE(`build_day_id`,`revision_id`)
);
--> statement-breakpoint
CREATE TABLE `orders` (
	`id` int AUTO_INCREMENT NOT NULL,
	`build_day_id` int NOT NULL,
	`offering_id` int NOT NULL,
	`user_id` int NOT NULL,
	`option_ids` json NOT NULL,
	`state` enum('pending','paid','cancelled','expired','refunded') NOT NULL DEFAULT 'pending',
	`amount_minor` int NOT NULL,
	`currency` varchar(3) NOT NULL,
	`member_price` boolean NOT NULL DEFAULT true,
	`seat` int,
	`stripe_session_id` varchar(255),
	`stripe_payment_intent` varchar(255),
	`hold_expires_at` timestamp,
	`paid_at` timestamp,
	`cancelled_at` timestamp,
	`cancel_reason` varchar(255),
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `orders_id` PRIMARY KEY(`id`),
	CONSTRAINT `orders_session_uq` UNIQUE(`stripe_session_id`)
);
--> statement-breakpoint
CREATE TABLE `price_history` (
	`id` int AUTO_INCREMENT NOT NULL,
	`revision_id` int NOT NULL,
	`option_ids` json NOT NULL,
	`inputs` json NOT NULL,
	`breakdown` json NOT NULL,
	`member_price_minor` int NOT NULL,
	`non_member_price_minor` int NOT NULL,
	`currency` varchar(3) NOT NULL,
	`published_by` int,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `price_history_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `reservations` (
	`id` int AUTO_INCREMENT NOT NULL,
	`order_id` int NOT NULL,
	`line_id` int NOT NULL,
	`part_id` int NOT NULL,
	`qty` int NOT NULL,
	`state` enum('held','confirmed','released','consumed') NOT NULL DEFAULT 'held',
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `reservations_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `settings` (
	`key` varchar(64) NOT NULL,
	`value` json NOT NULL,
	`note` text,
	CONSTRAINT `settings_key` PRIMARY KEY(`key`)
);
--> statement-breakpoint
CREATE TABLE `stripe_events` (
	`id` varchar(255) NOT NULL,
	`type` varchar(80) NOT NULL,
	`outcome` varchar(255),
	`received_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `stripe_events_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `waitlist` (
	`id` int AUTO_INCREMENT NOT NULL,
	`build_day_id` int NOT NULL,
	`offering_id` int NOT NULL,
	`user_id` int NOT NULL,
	`option_ids` json NOT NULL,
	`state` enum('waiting','offered','taken','lapsed','left') NOT NULL DEFAULT 'waiting',
	`hold_token_hash` varchar(64),
	`hold_expires_at` timestamp,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `waitlist_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `bag_events` (
	`id` int AUTO_INCREMENT NOT NULL,
	`bag_id` int NOT NULL,
	`bag_item_id` int,
	`kind` enum('claim','release','pack','undo','refused','seal','unseal','collect','rework') NOT NULL,
	`lot_id` int,
	`bin_id` int,
	`part_id` int,
	`qty` int,
	`undone` int NOT NULL DEFAULT 0,
	`user_id` int,
	`note` varchar(255),
	`created_at` timestamp(3) NOT NULL DEFAULT (now()),
	CONSTRAINT `bag_events_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `bag_items` (
	`id` int AUTO_INCREMENT NOT NULL,
	`bag_id` int NOT NULL,
	`line_id` int NOT NULL,
	`stage_id` int,
	`part_id` int NOT NULL,
	`qty_needed` int NOT NULL,
	`qty_packed` int NOT NULL DEFAULT 0,
	`stand_in_part_id` int,
	`stand_in_warning` varchar(255),
	CONSTRAINT `bag_items_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `bags` (
	`id` int AUTO_INCREMENT NOT NULL,
	`code` varchar(16) NOT NULL,
	`order_id` int NOT NULL,
	`build_day_id` int NOT NULL,
	`revision_id` int NOT NULL,
	`state` enum('open','packing','sealed','collected') NOT NULL DEFAULT 'open',
	`claimed_by` int,
	`claimed_at` timestamp,
	`sealed_by` int,
	`sealed_at` timestamp,
	`collected_at` timestamp,
	`rework_state` enum('none','needed','done','kept') NOT NULL DEFAULT 'none',
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `bags_id` PRIMARY KEY(`id`),
	CONSTRAINT `bags_code_uq` UNIQUE(`code`),
	CONSTRAINT `bags_order_uq` UNIQUE(`order_id`)
);
--> statement-breakpoint
CREATE TABLE `report_photos` (
	`id` int AUTO_INCREMENT NOT NULL,
	`report_id` int NOT NULL,
	`storage_key` varchar(255) NOT NULL,
	`content_type` varchar(32) NOT NULL,
	`size` int NOT NULL,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `report_photos_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `reports` (
	`id` int AUTO_INCREMENT NOT NULL,
	`order_id` int NOT NULL,
	`bag_id` int,
	`user_id` int NOT NULL,
	`line_ids` json NOT NULL,
	`something_else` varchar(255),
	`qty` int NOT NULL DEFAULT 1,
	`reason` enum('missing','damaged','wrong','extra') NOT NULL,
	`comment` text,
	`state` enum('open','handling','resolved','declined') NOT NULL DEFAULT 'open',
	`resolution` enum('handed-out','replaced','not-needed'),
	`decline_reason` varchar(255),
	`handled_by` int,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `reports_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
ALTER TABLE `audit_log` ADD CONSTRAINT `audit_log_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `auth_tokens` ADD CONSTRAINT `auth_tokens_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `auth_tokens` ADD CONSTRAINT `auth_tokens_created_by_users_id_fk` FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `user_roles` ADD CONSTRAINT `user_roles_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `swap_group_members` ADD CONSTRAINT `swap_group_members_group_id_swap_groups_id_fk` FOREIGN KEY (`group_id`) REFERENCES `swap_groups`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `swap_group_members` ADD CONSTRAINT `swap_group_members_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bom_lines` ADD CONSTRAINT `bom_lines_revision_id_revisions_id_fk` FOREIGN KEY (`revision_id`) REFERENCES `revisions`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bom_lines` ADD CONSTRAINT `bom_lines_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bom_lines` ADD CONSTRAINT `bom_lines_stage_id_stages_id_fk` FOREIGN KEY (`stage_id`) REFERENCES `stages`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bom_lines` ADD CONSTRAINT `bom_lines_option_id_options_id_fk` FOREIGN KEY (`option_id`) REFERENCES `options`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `option_groups` ADD CONSTRAINT `option_groups_revision_id_revisions_id_fk` FOREIGN KEY (`revision_id`) REFERENCES `revisions`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `options` ADD CONSTRAINT `options_group_id_option_groups_id_fk` FOREIGN KEY (`group_id`) REFERENCES `option_groups`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `options` ADD CONSTRAINT `options_revision_id_revisions_id_fk` FOREIGN KEY (`revision_id`) REFERENCES `revisions`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `revisions` ADD CONSTRAINT `revisions_kit_id_kits_id_fk` FOREIGN KEY (`kit_id`) REFERENCES `kits`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `stages` ADD CONSTRAINT `stages_revision_id_revisions_id_fk` FOREIGN KEY (`revision_id`) REFERENCES `revisions`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `ledger` ADD CONSTRAINT `ledger_lot_id_lots_id_fk` FOREIGN KEY (`lot_id`) REFERENCES `lots`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `ledger` ADD CONSTRAINT `ledger_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `lots` ADD CONSTRAINT `lots_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `lots` ADD CONSTRAINT `lots_bin_id_bins_id_fk` FOREIGN KEY (`bin_id`) REFERENCES `bins`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `supplier_offers` ADD CONSTRAINT `supplier_offers_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `offerings` ADD CONSTRAINT `offerings_build_day_id_build_days_id_fk` FOREIGN KEY (`build_day_id`) REFERENCES `build_days`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `offerings` ADD CONSTRAINT `offerings_revision_id_revisions_id_fk` FOREIGN KEY (`revision_id`) REFERENCES `revisions`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `orders` ADD CONSTRAINT `orders_build_day_id_build_days_id_fk` FOREIGN KEY (`build_day_id`) REFERENCES `build_days`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `orders` ADD CONSTRAINT `orders_offering_id_offerings_id_fk` FOREIGN KEY (`offering_id`) REFERENCES `offerings`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `orders` ADD CONSTRAINT `orders_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `price_history` ADD CONSTRAINT `price_history_revision_id_revisions_id_fk` FOREIGN KEY (`revision_id`) REFERENCES `revisions`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `price_history` ADD CONSTRAINT `price_history_published_by_users_id_fk` FOREIGN KEY (`published_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `reservations` ADD CONSTRAINT `reservations_order_id_orders_id_fk` FOREIGN KEY (`order_id`) REFERENCES `orders`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `reservations` ADD CONSTRAINT `reservations_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `waitlist` ADD CONSTRAINT `waitlist_build_day_id_build_days_id_fk` FOREIGN KEY (`build_day_id`) REFERENCES `build_days`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `waitlist` ADD CONSTRAINT `waitlist_offering_id_offerings_id_fk` FOREIGN KEY (`offering_id`) REFERENCES `offerings`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `waitlist` ADD CONSTRAINT `waitlist_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bag_events` ADD CONSTRAINT `bag_events_bag_id_bags_id_fk` FOREIGN KEY (`bag_id`) REFERENCES `bags`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bag_events` ADD CONSTRAINT `bag_events_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bag_items` ADD CONSTRAINT `bag_items_bag_id_bags_id_fk` FOREIGN KEY (`bag_id`) REFERENCES `bags`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bag_items` ADD CONSTRAINT `bag_items_line_id_bom_lines_id_fk` FOREIGN KEY (`line_id`) REFERENCES `bom_lines`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bags` ADD CONSTRAINT `bags_order_id_orders_id_fk` FOREIGN KEY (`order_id`) REFERENCES `orders`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bags` ADD CONSTRAINT `bags_build_day_id_build_days_id_fk` FOREIGN KEY (`build_day_id`) REFERENCES `build_days`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bags` ADD CONSTRAINT `bags_revision_id_revisions_id_fk` FOREIGN KEY (`revision_id`) REFERENCES `revisions`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bags` ADD CONSTRAINT `bags_claimed_by_users_id_fk` FOREIGN KEY (`claimed_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bags` ADD CONSTRAINT `bags_sealed_by_users_id_fk` FOREIGN KEY (`sealed_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `report_photos` ADD CONSTRAINT `report_photos_report_id_reports_id_fk` FOREIGN KEY (`report_id`) REFERENCES `reports`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `reports` ADD CONSTRAINT `reports_order_id_orders_id_fk` FOREIGN KEY (`order_id`) REFERENCES `orders`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `reports` ADD CONSTRAINT `reports_bag_id_bags_id_fk` FOREIGN KEY (`bag_id`) REFERENCES `bags`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `reports` ADD CONSTRAINT `reports_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `reports` ADD CONSTRAINT `reports_handled_by_users_id_fk` FOREIGN KEY (`handled_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `audit_subject_idx` ON `audit_log` (`subject_type`,`subject_id`);--> statement-breakpoint
CREATE INDEX `sign_in_failures_key_idx` ON `sign_in_failures` (`key`,`failed_at`);--> statement-breakpoint
CREATE INDEX `parts_kind_value_idx` ON `parts` (`kind`,`value`);--> statement-breakpoint
CREATE INDEX `bom_lines_revision_idx` ON `bom_lines` (`revision_id`);--> statement-breakpoint
CREATE INDEX `bom_lines_part_idx` ON `bom_lines` (`part_id`);--> statement-breakpoint
CREATE INDEX `stages_revision_idx` ON `stages` (`revision_id`);--> statement-breakpoint
CREATE INDEX `ledger_lot_idx` ON `ledger` (`lot_id`);--> statement-breakpoint
CREATE INDEX `ledger_part_idx` ON `ledger` (`part_id`);--> statement-breakpoint
CREATE INDEX `ledger_created_idx` ON `ledger` (`created_at`);--> statement-breakpoint
CREATE INDEX `lots_part_idx` ON `lots` (`part_id`);--> statement-breakpoint
CREATE INDEX `lots_bin_idx` ON `lots` (`bin_id`);--> statement-breakpoint
CREATE INDEX `supplier_offers_part_idx` ON `supplier_offers` (`part_id`);--> statement-breakpoint
CREATE INDEX `orders_day_state_idx` ON `orders` (`build_day_id`,`state`);--> statement-breakpoint
CREATE INDEX `orders_user_idx` ON `orders` (`user_id`);--> statement-breakpoint
CREATE INDEX `reservations_part_state_idx` ON `reservations` (`part_id`,`state`);--> statement-breakpoint
CREATE INDEX `reservations_order_idx` ON `reservations` (`order_id`);--> statement-breakpoint
CREATE INDEX `waitlist_day_idx` ON `waitlist` (`build_day_id`,`state`);--> statement-breakpoint
CREATE INDEX `bag_events_bag_idx` ON `bag_events` (`bag_id`);--> statement-breakpoint
CREATE INDEX `bag_items_bag_idx` ON `bag_items` (`bag_id`);--> statement-breakpoint
CREATE INDEX `bags_day_state_idx` ON `bags` (`build_day_id`,`state`);--> statement-breakpoint
CREATE INDEX `reports_state_idx` ON `reports` (`state`);--> statement-breakpoint
CREATE INDEX `reports_user_idx` ON `reports` (`user_id`);