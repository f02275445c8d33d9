/**
 * The desk's command line: `npm run liftwise -- COMMAND ...`.
 * Each command lives in server/cli/commands/<name>.ts and exports `run(argv): Promise<number>`
 * (the exit code). Output formats are contracts that desk scripts depend on.
 */
type Command = { summary: string; load: () => Promise<{ run(argv: string[]): Promise<number> }> };

const commands: Record<string, Command> = {
  inspect: { summary: 'describe a model-run file (GRIB2 / NetCDF), or dump one field', load: () => import('./commands/inspect.ts') },
  'verify-snapshot': { summary: 'check an exported sealed snapshot offline (hash, chain, signature)', load: () => import('./commands/verify-snapshot.ts') },
  diagnose: { summary: 'QG omega diagnosis of a run, step by step', load: () => import('./commands/diagnose.ts') },
  signals: { summary: 'regional daily signals of a run (precipitation, cloud, solar, inflow), offline', load: () => import('./commands/signals.ts') },
  upload: { summary: 'upload a model-run file to a Liftwise server with an API token', load: () => import('./commands/upload.ts') },
};

function usage(): string {
  const lines = Object.entries(commands).map(([name, c]) => `  ${name.padEnd(16)} ${c.summary}`);
  return ['usage: npm run liftwise -- COMMAND [options]', '', 'commands:', ...lines].join('\n');
}

async function main(): Promise<number> {
  const [name, ...rest] = process.argv.slice(2);
  if (!name || name === '--help' || name === '-h') {
    console.log(usage());
    return name ? 0 : 2;
  }
  const command = commands[name];
  if (!command) {
    console.error(`liftwise: unknown command "${name}"\n\n${usage()}`);
    return 2;
  }
  const mod = await command.load();
  return mod.run(rest);
}

main().then(
  (code) => process.exit(code),
  (err: unknown) => {
    console.error(`liftwise: ${err instanceof Error ? err.message : String(err)}`);
    process.exit(1);
  },
);
