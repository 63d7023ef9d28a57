/**
 * A reader that goes away (`bandwise ingest … | head -1`) makes every later write to stdout fail
 * with EPIPE (POSIX write(2)). The command then drops the rest of its output and goes on with its
 * work, ending with its own exit status: an ingest is not cut short by a closed pipe.
 */
export function dropOutputWhenReaderCloses(): void {
  process.stdout.on('error', (e: NodeJS.ErrnoException) => {
    if (e.code !== 'EPIPE') throw e;
    process.stdout.write = () => true;
  });
}
