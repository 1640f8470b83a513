DROP INDEX `bag_events_lot_idx` ON `bag_events`;--> statement-breakpoint
CREATE INDEX `bag_events_lot_pack_idx` ON `bag_events` (`lot_id`,`kind`,`undone`,`bag_id`,`qty`);