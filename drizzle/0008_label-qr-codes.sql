CREATE TABLE `module_qr_codes` (
	`module_id` integer PRIMARY KEY NOT NULL,
	`payload` text NOT NULL,
	`svg` text NOT NULL,
	FOREIGN KEY (`module_id`) REFERENCES `modules`(`id`) ON UPDATE no action ON DELETE no action
);
