export { default as FleetFilters } from './fleet-filters.svelte';
export { default as ColumnChooser } from './column-chooser.svelte';
export { default as FleetTable } from './fleet-table.svelte';
export type { FleetFilterValues, FleetPage, FleetRow } from './types';
