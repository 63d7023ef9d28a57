// DataTable rendered in happy-dom: rows, the row limit, number alignment and the TSV export
// (IANA text/tab-separated-values) handed to the browser download.
import { fireEvent, render, screen } from '@testing-library/svelte';
import { afterEach, describe, expect, it, vi } from 'vitest';
import DataTable from '../../src/dashboard/components/DataTable.svelte';
import type { Row } from '../../src/queries/client.ts';

const columns = [
  { key: 'subject', label: 'Subject' },
  { key: 'age', label: 'Age (years)', digits: 0 },
];
const rows = Array.from({ length: 5 }, (_, i) => ({ subject: `sub-0${i + 1}`, age: 30.4 + i }));

describe('DataTable', () => {
  afterEach(() => vi.restoreAllMocks());

  it('shows the rows up to the limit, then all on request', async () => {
    render(DataTable, { title: 'Participants', columns, rows, rowKey: (r: Row) => String(r.subject), limit: 3, testId: 't' });
    expect(screen.getByRole('heading').textContent).toBe('Participants (5)');
    expect(screen.getAllByRole('row')).toHaveLength(1 + 3);
    await fireEvent.click(screen.getByRole('button', { name: 'Show all 5 rows' }));
    const body = screen.getAllByRole('row').slice(1);
    expect(body).toHaveLength(5);
    expect(body[4].textContent).toBe('sub-0534');
    expect(screen.getAllByRole('cell')[1].classList.contains('num')).toBe(true);
    expect(screen.getAllByRole('cell')[0].classList.contains('num')).toBe(false);
  });

  it('exports every row as TSV with raw numbers', async () => {
    const blobs: Blob[] = [];
    vi.spyOn(URL, 'createObjectURL').mockImplementation((b) => {
      blobs.push(b as Blob);
      return 'blob:test';
    });
    vi.spyOn(URL, 'revokeObjectURL').mockImplementation(() => undefined);
    render(DataTable, { title: 'Participants', columns, rows, rowKey: (r: Row) => String(r.subject), limit: 2 });
    await fireEvent.click(screen.getByRole('button', { name: 'Export TSV' }));
    expect(blobs).toHaveLength(1);
    expect(blobs[0].type).toBe('text/tab-separated-values');
    expect(await blobs[0].text()).toBe('subject\tage\nsub-01\t30.4\nsub-02\t31.4\nsub-03\t32.4\nsub-04\t33.4\nsub-05\t34.4\n');
  });

  it('says so when there is nothing to show', () => {
    render(DataTable, { title: 'Failed inputs', columns, rows: [], rowKey: () => '', empty: 'No input failed.' });
    expect(screen.getByText('No input failed.')).toBeTruthy();
    expect((screen.getByRole('button', { name: 'Export TSV' }) as HTMLButtonElement).disabled).toBe(true);
  });
});
