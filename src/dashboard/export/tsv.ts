// Tables as tab-separated values: the one writer of src/core/report/tsv.ts (the command line's too).
export { toTsv, type TsvColumn } from '../../core/report/tsv.ts';
