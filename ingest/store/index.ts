/** The DuckDB store (Node only): open/create, the single writer, the bundle it takes (reads for analyses: the named queries of src/queries over src/analysis/store-client.ts). */
export { openStore, readHeaderStorageNumber, STORAGE_COMPATIBILITY, MAX_READABLE_STORAGE_NUMBER, type OpenOptions } from './database.ts';
export { Store, type BeginRunOptions, type CohortQualityRow, type IngestErrorIn, type ParticipantValue } from './writer.ts';
export type * from './bundle.ts';
export { DatabaseBusyError, DiskFullError, StoreError } from './errors.ts';
export { canonicalJson, recordingIdFor, runIdentity } from './identity.ts';
export { TABLES, TABLE_NAMES, type TableDef, type ColumnDef } from './schema.ts';
