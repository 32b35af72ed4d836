/**
 * The fleet table, by use case: filters as SQL (fleet-filters), one page of the register
 * (fleet-list), the CSV export (fleet-export), filter choices and column preferences
 * (fleet-prefs). The query plans were chosen with EXPLAIN QUERY PLAN on the 200,000-module
 * fleet of `npm run bench:fleet`; run it after changing them.
 */
export { listModules, listModulesJson, type FleetItem } from './fleet-list';
export { exportModules, EXPORT_CAP } from './fleet-export';
export { fleetFilterOptions, getColumnPrefs, setColumnPrefs } from './fleet-prefs';
