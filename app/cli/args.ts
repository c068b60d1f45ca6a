/** Parsing of the CLI's option values, with messages that name the option and what it wants. */
import { FIELD_KINDS, FieldkilnError, boundsProblem, type Bounds, type FieldKind } from '../../core/types.js';

export class UsageError extends FieldkilnError {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

export function parseNumberOption(name: string, raw: string | undefined): number | undefined {
  if (raw === undefined) return undefined;
  const v = Number(raw.trim());
  if (raw.trim() === '' || !Number.isFinite(v)) throw new UsageError(`--${name} wants a number (got '${raw}')`);
  return v;
}

export function parseIntegerOption(name: string, raw: string | undefined, min: number, max: number): number | undefined {
  const v = parseNumberOption(name, raw);
  if (v === undefined) return undefined;
  if (!Number.isInteger(v) || v < min || v > max) throw new UsageError(`--${name} wants a whole number from ${min} to ${max} (got '${raw}')`);
  return v;
}

export function parseBoundsOption(raw: string | undefined): Bounds | undefined {
  if (raw === undefined) return undefined;
  const parts = raw.split(',').map((s) => s.trim());
  const nums = parts.map(Number);
  if (parts.length !== 6 || parts.some((p) => p === '') || nums.some((n) => !Number.isFinite(n))) {
    throw new UsageError(`--bounds wants six numbers xmin,ymin,zmin,xmax,ymax,zmax in metres (got '${raw}')`);
  }
  const problem = boundsProblem(nums);
  if (problem) throw new UsageError(`--bounds: ${problem}`);
  return nums as Bounds;
}

export function parseKindOption(raw: string | undefined): FieldKind | undefined {
  if (raw === undefined) return undefined;
  if (!(FIELD_KINDS as readonly string[]).includes(raw)) throw new UsageError(`--kind wants one of ${FIELD_KINDS.join(', ')} (got '${raw}')`);
  return raw as FieldKind;
}

export function parseChoice<T extends string>(name: string, raw: string | undefined, choices: readonly T[]): T | undefined {
  if (raw === undefined) return undefined;
  if (!(choices as readonly string[]).includes(raw)) throw new UsageError(`--${name} wants one of ${choices.join(', ')} (got '${raw}')`);
  return raw as T;
}
