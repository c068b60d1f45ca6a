/** `fieldkiln inspect <field> [--json]`: what a field is, where it is, what values it takes. */
import { parseArgs } from 'node:util';
import { probeField } from '../../../core/sampling/probe-field.js';
import { openField } from '../../fields/open-field.js';
import { parseBoundsOption, parseKindOption, parseNumberOption, UsageError } from '../args.js';

export const INSPECT_HELP = `fieldkiln inspect <field> [--json] [--kind k] [--bounds …] [--level v]

Prints the field's kind, bounds, outputs and level, and probes it on a 33-node lattice: value range,
percentiles, share inside, and whether a surface was found at the level.
`;

export async function runInspect(argv: string[]): Promise<number> {
  const { values, positionals } = parseArgs({
    args: argv,
    allowPositionals: true,
    strict: true,
    options: {
      json: { type: 'boolean', default: false },
      kind: { type: 'string' },
      bounds: { type: 'string' },
      level: { type: 'string' },
      help: { type: 'boolean', short: 'h' },
    },
  });
  if (values.help) {
    process.stdout.write(INSPECT_HELP);
    return 0;
  }
  if (positionals.length !== 1) throw new UsageError(`inspect wants exactly one field file (got ${positionals.length})`);
  const kind = parseKindOption(values.kind);
  const bounds = parseBoundsOption(values.bounds);
  const level = parseNumberOption('level', values.level);
  const field = await openField(positionals[0], { kind, bounds, level });
  try {
    const lev = level ?? field.defaultLevel;
    const probe = await probeField(field, { level: lev });
    const info = {
      file: positionals[0],
      source: field.description.source,
      name: field.description.name,
      kind: field.kind,
      bounds: field.bounds,
      level: lev ?? null,
      outputs: field.description.outputs,
      hasColor: field.hasColor,
      lipschitz: field.lipschitz ?? null,
      details: field.description.details ?? {},
      probe,
    };
    if (values.json) {
      process.stdout.write(JSON.stringify(info, null, 2) + '\n');
      return 0;
    }
    const f = (v: number) => (Number.isFinite(v) ? Number(v.toPrecision(5)).toString() : String(v));
    const lines = [
      `file      ${info.file}`,
      `source    ${info.source} (${info.name})`,
      `kind      ${info.kind}`,
      `bounds    ${info.bounds.map(f).join(', ')} m`,
      `level     ${lev === undefined ? 'none declared: pass --level' : f(lev)}`,
      `outputs   ${info.outputs.join(', ')}`,
      `color     ${info.hasColor ? 'yes' : 'no'}`,
      `values    ${f(probe.valueRange[0])} .. ${f(probe.valueRange[1])} (p1 ${f(probe.percentiles.p1)}, median ${f(probe.percentiles.p50)}, p99 ${f(probe.percentiles.p99)}; ${probe.samples} samples${probe.nonFinite ? `, ${probe.nonFinite} NaN/Inf` : ''})`,
      `surface   ${probe.surfaceFound === undefined ? 'unknown (no level)' : probe.surfaceFound ? `found (${(100 * probe.insideFraction!).toFixed(1)}% of samples inside)` : 'NOT found at this level on the coarse probe'}`,
    ];
    for (const [k, v] of Object.entries(info.details)) lines.push(`${k.padEnd(9)} ${typeof v === 'string' ? v : JSON.stringify(v)}`);
    process.stdout.write(lines.join('\n') + '\n');
    return 0;
  } finally {
    await field.dispose?.();
  }
}
