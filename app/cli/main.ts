/** Fieldkiln's command line: a thin layer that parses arguments, reads files, calls core and writes files. */
import { CancelledError, FieldkilnError } from '../../core/types.js';
import { FIELDKILN_VERSION } from '../../core/version.js';
import { BAKE_HELP, runBake } from './commands/bake.js';
import { INSPECT_HELP, runInspect } from './commands/inspect.js';
import { CHECK_HELP, runCheck } from './commands/check.js';

const COMMANDS: Record<string, { run: (argv: string[]) => Promise<number>; help: string; summary: string }> = {
  bake: { run: runBake, help: BAKE_HELP, summary: 'turn a field into a checked GLB mesh' },
  inspect: { run: runInspect, help: INSPECT_HELP, summary: "print a field's kind, bounds, outputs and value range" },
  check: { run: runCheck, help: CHECK_HELP, summary: 'run the topology checks on a mesh file (.glb, .gltf, .ply, .stl, .obj)' },
};

function usage(): string {
  const rows = Object.entries(COMMANDS).map(([n, c]) => `  ${n.padEnd(10)} ${c.summary}`);
  return `fieldkiln ${FIELDKILN_VERSION}: implicit fields to game-ready meshes\n\nusage: fieldkiln <command> [options]\n\n${rows.join('\n')}\n\n'fieldkiln <command> --help' shows a command's options.\n`;
}

export async function main(argv: string[]): Promise<number> {
  const [cmd, ...rest] = argv;
  if (!cmd || cmd === '--help' || cmd === '-h' || cmd === 'help') {
    process.stdout.write(usage());
    return cmd ? 0 : 2;
  }
  if (cmd === '--version' || cmd === '-v') {
    process.stdout.write(`${FIELDKILN_VERSION}\n`);
    return 0;
  }
  const c = COMMANDS[cmd];
  if (!c) {
    process.stderr.write(`fieldkiln: error: unknown command '${cmd}'; commands: ${Object.keys(COMMANDS).join(', ')}\n`);
    return 2;
  }
  try {
    return await c.run(rest);
  } catch (e) {
    const err = e as Error & { code?: string };
    if (err instanceof CancelledError) {
      process.stderr.write('\nfieldkiln: cancelled\n');
      return 130;
    }
    if (err instanceof FieldkilnError) {
      process.stderr.write(`\nfieldkiln: error: ${err.message}\n`);
      return err.name === 'UsageError' ? 2 : 1;
    }
    if (err?.code && String(err.code).startsWith('ERR_PARSE_ARGS')) {
      process.stderr.write(`fieldkiln: error: ${err.message}; see 'fieldkiln ${cmd} --help'\n`);
      return 2;
    }
    process.stderr.write(`\nfieldkiln: internal error (please report): ${err?.stack ?? String(e)}\n`);
    return 70;
  }
}
