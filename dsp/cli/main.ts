// `tidemark` command line: dispatches to one file per subcommand, loaded
// lazily so a subcommand's dependencies load only when it runs.
// Exit codes: 0 ok, 1 usage, 2 error (message on stderr).

type Command = (argv: string[]) => Promise<number>;

const commands: Record<string, () => Promise<Command>> = {
  analyze: async () => (await import("./analyze.ts")).runAnalyze,
  render: async () => (await import("./render.ts")).runRender,
};

const USAGE = `usage: tidemark <command> [options]

commands:
  analyze FILE.wav   loudness, peaks and correlation of a WAV file, as JSON
  render ...         render a file through a processing chain
`;

export async function main(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  // `tidemark --help` exits 0; `tidemark` alone prints the usage and exits 1.
  if (!name || name === "--help" || name === "-h" || name === "help") {
    process.stdout.write(USAGE);
    return name ? 0 : 1;
  }
  const load = commands[name];
  if (!load) {
    process.stderr.write(`tidemark: unknown command "${name}"\n\n${USAGE}`);
    return 1;
  }
  let command: Command;
  try {
    command = await load();
  } catch (err) {
    process.stderr.write(`tidemark: the "${name}" command is not available (${(err as Error).message})\n`);
    return 2;
  }
  return command(rest);
}

process.exitCode = await main(process.argv.slice(2));
