/**
 * Words and small helpers of the site and system pages, with no zod in them, so a phone page
 * that shows a site's application or builds the design check's inverter window does not
 * carry the schema library (~24 KB gzip). The forms' schemas are in `$lib/schemas/site`.
 */
import type {
	CLIMATE_BANDS as DB_CLIMATE_BANDS,
	SITE_APPLICATIONS as DB_SITE_APPLICATIONS
} from '$lib/server/db/schema';

export type SiteApplication = (typeof DB_SITE_APPLICATIONS)[number];

/** Our own words for what a site's battery is for; the Record type keeps it in step with the table's list. */
export const SITE_APPLICATION_LABELS: Record<SiteApplication, string> = {
	off_grid_home: 'Off-grid home',
	backup: 'Backup for a grid-connected home or business',
	ups: 'Uninterruptible supply (UPS)',
	workshop: 'Workshop, farm or yard',
	telecom: 'Telecom or radio hut',
	other: 'Something else'
};
export const SITE_APPLICATIONS = Object.keys(SITE_APPLICATION_LABELS) as SiteApplication[];

export type ClimateBand = (typeof DB_CLIMATE_BANDS)[number];

/** Main climate groups of the Köppen–Geiger classification, in plain words. */
export const CLIMATE_BAND_LABELS: Record<ClimateBand, string> = {
	tropical: 'Tropical (hot, humid)',
	arid: 'Arid (desert, steppe)',
	temperate: 'Temperate (mild winters)',
	continental: 'Continental (cold winters)',
	polar: 'Polar or alpine'
};
export const CLIMATE_BANDS = Object.keys(CLIMATE_BAND_LABELS) as ClimateBand[];

export { toInverterWindow } from '$lib/domain/inverter-window';
