// A throwaway PostgreSQL cluster for tests and benches: Debian's `postgresql` package (installed with
// apt-get when running as root and missing, otherwise the command is printed), a new cluster in a temp
// folder, started on a free loopback port, removed again by stop(). As root the server runs as the
// `postgres` system user (PostgreSQL refuses to run as root).
import { execFileSync, spawnSync } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";

export interface ThrowawayPostgres {
  /** postgres://limberly@127.0.0.1:PORT/limberly */
  url: string;
  port: number;
  /** Creates another empty database in the same cluster and returns its URL. */
  createDatabase(name: string): string;
  stop(): void;
}

const INSTALL = "apt-get update && apt-get install -y postgresql";

function binDir(): string | null {
  const base = "/usr/lib/postgresql";
  if (!fs.existsSync(base)) return null;
  const versions = fs
    .readdirSync(base)
    .filter((v) => fs.existsSync(path.join(base, v, "bin", "initdb")))
    .sort((a, b) => Number(b) - Number(a));
  return versions.length ? path.join(base, versions[0], "bin") : null;
}

/** The folder with initdb/pg_ctl, installing Debian's package first when running as root. */
export function ensurePostgres(): string {
  let bin = binDir();
  if (bin) return bin;
  if (process.getuid?.() === 0) {
    console.log(`PostgreSQL is missing: installing Debian's package (${INSTALL})`);
    spawnSync("bash", ["-c", `DEBIAN_FRONTEND=noninteractive ${INSTALL}`], { stdio: "inherit" });
    bin = binDir();
    if (bin) return bin;
  }
  throw new Error(`The PostgreSQL tests need Debian's postgresql package. Install it with:\n  sudo ${INSTALL}`);
}

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address() as net.AddressInfo;
      srv.close(() => resolve(port));
    });
  });
}

export async function startPostgres(options: { port?: number; timeZone?: string } = {}): Promise<ThrowawayPostgres> {
  const bin = ensurePostgres();
  const port = options.port ?? (await freePort());
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-pg-"));
  const data = path.join(dir, "data");
  const asRoot = process.getuid?.() === 0;
  // As root, hand the folder to the postgres system user and run every server command as that user.
  if (asRoot) execFileSync("chown", ["-R", "postgres:postgres", dir]);
  const run = (cmd: string, args: string[]) => {
    const [file, argv] = asRoot
      ? ["runuser", ["-u", "postgres", "--", path.join(bin, cmd), ...args]]
      : [path.join(bin, cmd), args];
    return execFileSync(file, argv, { stdio: ["ignore", "pipe", "pipe"], cwd: dir });
  };
  run("initdb", ["-D", data, "-U", "limberly", "--auth=trust", "--encoding=UTF8", "--locale=C.UTF-8"]);
  const tz = options.timeZone ?? "UTC";
  fs.appendFileSync(
    path.join(data, "postgresql.conf"),
    [
      `port = ${port}`,
      "listen_addresses = '127.0.0.1'",
      `unix_socket_directories = '${dir}'`,
      `timezone = '${tz}'`,
      "fsync = off",
      "synchronous_commit = off",
      "full_page_writes = off",
      "max_connections = 200",
      "",
    ].join("\n"),
  );
  run("pg_ctl", ["-D", data, "-l", path.join(dir, "server.log"), "-w", "-t", "60", "start"]);
  const psql = (sql: string) =>
    run("psql", ["-h", "127.0.0.1", "-p", String(port), "-U", "limberly", "-d", "postgres", "-c", sql]);
  psql("CREATE DATABASE limberly");
  const urlFor = (name: string) => `postgres://limberly@127.0.0.1:${port}/${name}`;
  let stopped = false;
  const stop = () => {
    if (stopped) return;
    stopped = true;
    try {
      run("pg_ctl", ["-D", data, "-m", "immediate", "-w", "stop"]);
    } catch {
      // already gone
    }
    fs.rmSync(dir, { recursive: true, force: true });
  };
  process.once("exit", stop);
  return {
    url: urlFor("limberly"),
    port,
    createDatabase(name: string) {
      if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`not a plain database name: ${name}`);
      psql(`CREATE DATABASE ${name}`);
      return urlFor(name);
    },
    stop,
  };
}

// `tsx scripts/postgres.ts` starts a cluster, prints its URL and keeps it until Ctrl-C.
if (import.meta.url === `file://${process.argv[1]}`) {
  const pg = await startPostgres({ port: process.env.PGPORT ? Number(process.env.PGPORT) : undefined });
  console.log(`PostgreSQL ready: DATABASE_URL=${pg.url}`);
  process.on("SIGINT", () => {
    pg.stop();
    process.exit(0);
  });
  setInterval(() => {}, 1 << 30);
}
