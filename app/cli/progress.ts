/**
 * Progress on stderr: a redrawn bar when stderr is a terminal, plain lines otherwise (one per stage
 * and per quarter of it), so logs in CI stay readable.
 */
export function makeProgress(stream: NodeJS.WriteStream = process.stderr, quiet = false): { update: (stage: string, fraction: number) => void; done: () => void } {
  if (quiet) return { update: () => {}, done: () => {} };
  const tty = stream.isTTY === true;
  let lastStage = '';
  let lastQuarter = -1;
  let lastDraw = 0;
  return {
    update(stage, fraction) {
      const pct = Math.max(0, Math.min(100, Math.round(fraction * 100)));
      if (tty) {
        const now = Date.now();
        if (stage === lastStage && now - lastDraw < 80 && pct < 100) return;
        lastDraw = now;
        lastStage = stage;
        const width = 28;
        const filled = Math.round((pct / 100) * width);
        stream.write(`\r\x1b[2K${stage.padEnd(8)} [${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${String(pct).padStart(3)}%`);
      } else {
        const q = Math.floor(pct / 25);
        if (stage !== lastStage || q !== lastQuarter) {
          lastStage = stage;
          lastQuarter = q;
          stream.write(`fieldkiln: ${stage} ${pct}%\n`);
        }
      }
    },
    done() {
      if (tty && lastStage) stream.write('\r\x1b[2K');
    },
  };
}
