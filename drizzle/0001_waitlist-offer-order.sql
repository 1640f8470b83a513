ALTER TABLE `waitlist` ADD `order_id` int;--> statement-breakpoint
ALTER TABLE `waitlist` ADD CONSTRAINT `waitlist_token_uq` UNIQUE(`hold_token_hash`);--> statement-breakpoint
ALTER TABLE `waitlist` ADD CONSTRAINT `waitlist_order_id_orders_id_fk` FOREIGN KEY (`order_id`) REFERENCES `orders`(`id`) ON DELETE set null ON UPDATE no action;