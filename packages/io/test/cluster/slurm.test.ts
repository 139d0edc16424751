import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { intradyneCommand } from '../../src/cli/sweep.js';
import { shellQuote } from '../../src/sweep/slurm-script.js';
import { runBuilt, runMain } from '../support/run-cli.js';
import { simulateSixteenCaptures } from '../support/sharded-captures.js';

// A real single-node Slurm cluster on this host (Debian packages slurm-wlm
// and munge; .ci/run installs them), started by start-slurm.sh with its own
// munge key, ports and state folder, and stopped after the tests. The
// sweep's --emit-slurm script submits a 4-task array over sixteen captures
// and the merge after it; the merged table must be the bytes one sweep
// writes. When the daemons cannot start, the test throws with their logs:
// the test fails, it never skips. Everything happens inside the one test
// (a failing beforeAll would count its test as skipped).

const HERE = fileURLToPath(new URL('.', import.meta.url));
/** Upper bound on the wait for a job array (and the merge): the sweep's takes about 15 s on 2 CPUs. */
const JOBS_TIMEOUT_MS = 100_000;

let work: string;
let state: string;
let clusterEnv: Record<string, string> = {};

/** Two TCP ports free on this host now, for the controller and the node daemon. */
async function freePorts(count: number): Promise<number[]> {
  const servers = await Promise.all(
    Array.from(
      { length: count },
      () =>
        new Promise<ReturnType<typeof createServer>>((resolve, reject) => {
          const s = createServer();
          s.once('error', reject);
          s.listen(0, '127.0.0.1', () => resolve(s));
        }),
    ),
  );
  const ports = servers.map((s) => (s.address() as { port: number }).port);
  await Promise.all(servers.map((s) => new Promise((resolve) => s.close(resolve))));
  return ports;
}

/** The last lines of the daemons' logs and of the jobs' logs, for a failure message. */
function logs(out?: string): string {
  const files = ['munged.log', 'slurmctld.log', 'slurmd.log'].map((f) => join(state, f));
  if (out && existsSync(join(out, 'logs'))) for (const f of readdirSync(join(out, 'logs'))) files.push(join(out, 'logs', f));
  return files
    .map((f) => `----- ${f}\n${existsSync(f) ? readFileSync(f, 'utf8').split('\n').slice(-40).join('\n') : '(not written)'}`)
    .join('\n');
}

function slurm(command: string, args: string[]): string {
  const r = spawnSync(command, args, { encoding: 'utf8', env: { ...process.env, ...clusterEnv }, timeout: 20_000 });
  if (r.status !== 0) throw new Error(`${command} ${args.join(' ')} failed (${r.status}): ${r.stderr}\n${logs()}`);
  return r.stdout;
}

/** Waits until none of the jobs is queued or running (bounded by JOBS_TIMEOUT_MS). */
async function waitFor(ids: readonly string[], out: string): Promise<void> {
  const deadline = Date.now() + JOBS_TIMEOUT_MS;
  while (slurm('squeue', ['-h', '-j', ids.join(','), '-o', '%i %T']).trim() !== '') {
    if (Date.now() > deadline)
      throw new Error(`the jobs did not end within ${JOBS_TIMEOUT_MS / 1000} s:\n${slurm('squeue', ['-a'])}\n${logs(out)}`);
    await new Promise((resolve) => setTimeout(resolve, 500));
  }
}

/** The states of a job's tasks; scontrol keeps ended jobs for MinJobAge (600 s in the test's slurm.conf). */
const states = (id: string) => [...slurm('scontrol', ['show', 'job', id]).matchAll(/JobState=(\w+)/g)].map((m) => m[1]);

afterAll(() => {
  if (state) {
    spawnSync('bash', [join(HERE, 'stop-slurm.sh'), state], { encoding: 'utf8', timeout: 60_000 });
    rmSync(state, { recursive: true, force: true });
  }
  if (work) rmSync(work, { recursive: true, force: true });
});

/**
 * Starts the cluster; throws with the daemons' logs when it cannot, so that
 * the test fails (and is not reported as skipped, as a failing hook would make it).
 */
async function startCluster(): Promise<void> {
  state = mkdtempSync(join(tmpdir(), 'intradyne-slurm-'));
  const [controller, node] = await freePorts(2);
  const start = spawnSync('bash', [join(HERE, 'start-slurm.sh'), state, String(controller), String(node)], {
    encoding: 'utf8',
    timeout: 60_000,
  });
  if (start.status !== 0) {
    throw new Error(
      `The Slurm daemons did not start (this test needs the Debian packages slurm-wlm and munge, and root):\n` +
        `${start.stdout}${start.stderr}${start.error ? String(start.error) : ''}\n${logs()}`,
    );
  }
  clusterEnv = { SLURM_CONF: join(state, 'slurm.conf') };
}

describe('a sweep as a Slurm job array on a single-node cluster', () => {
  it('runs the emitted script: 4 array tasks and the merge give the bytes of one sweep', async () => {
    await startCluster();
    expect(slurm('sinfo', ['-h', '-o', '%T'])).toBe('idle\n');
    work = mkdtempSync(join(tmpdir(), 'intradyne-slurm-work-'));
    const captures = await simulateSixteenCaptures(work);
    const one = join(work, 'one');
    const r = await runBuilt(['sweep', captures, '--jobs', '2', '--out', one]);
    expect(r.code, r.stderr).toBe(0);
    const single = { csv: readFileSync(join(one, 'results.csv')), arrow: readFileSync(join(one, 'results.arrow')) };

    const script = join(work, 'lab.slurm');
    const out = join(work, 'cluster');
    const emitted = await runMain(['sweep', captures, '--out', out, '--emit-slurm', script, '--tasks', '4', '--jobs', '1']);
    expect(emitted.code, emitted.stderr).toBe(0);

    const submitted = slurm('bash', [script]);
    const ids = /submitted the shards as job (\d+) and the merge as job (\d+)/.exec(submitted);
    expect(ids, submitted).not.toBeNull();
    const [array, merge] = [ids![1], ids![2]];

    await waitFor([array, merge], out);
    expect(states(array), logs(out)).toEqual(['COMPLETED', 'COMPLETED', 'COMPLETED', 'COMPLETED']);
    expect(states(merge), logs(out)).toEqual(['COMPLETED']);
    expect(
      readFileSync(join(out, 'logs', readdirSync(join(out, 'logs')).find((f) => f.startsWith('merge-'))!), 'utf8'),
    ).toContain('merged 4 shards: 16 captures, failed 0');

    // Byte for byte: every column, the metrics among them, in CSV and in Arrow.
    expect(readFileSync(join(out, 'results.csv'))).toEqual(single.csv);
    expect(readFileSync(join(out, 'results.arrow'))).toEqual(single.arrow);
    for (const k of [0, 1, 2, 3]) expect(existsSync(join(out, `shard-${k}-of-4`, 'shard.json'))).toBe(true);

    // --shard auto in an array numbered from 1 (--array=1-4): task t is shard t − 1 of 4,
    // so each task finds the journal of the same shard above and analyses nothing again.
    const again = join(work, 'again');
    cpSync(out, again, { recursive: true });
    for (const k of [0, 1, 2, 3]) rmSync(join(again, `shard-${k}-of-4`, 'shard.json'));
    rmSync(join(again, 'results.csv'));
    rmSync(join(again, 'logs'), { recursive: true });
    mkdirSync(join(again, 'logs'));
    const [node, main] = intradyneCommand();
    const auto = slurm('sbatch', [
      '--parsable',
      '--array=1-4',
      '--cpus-per-task=1',
      `--output=${join(again, 'logs', 'task-%a.out')}`,
      `--wrap=${[node, main, 'sweep', captures, '--out', again, '--shard', 'auto', '--jobs', '1'].map(shellQuote).join(' ')}`,
    ]).trim();
    await waitFor([auto], again);
    expect(states(auto), logs(again)).toEqual(['COMPLETED', 'COMPLETED', 'COMPLETED', 'COMPLETED']);
    for (const t of [1, 2, 3, 4]) {
      const log = readFileSync(join(again, 'logs', `task-${t}.out`), 'utf8');
      const rows = JSON.parse(readFileSync(join(again, `shard-${t - 1}-of-4`, 'shard.json'), 'utf8')).rows.length;
      expect(log).toContain(`shard ${t - 1}/4: swept ${rows} captures: analysed 0, skipped ${rows}, failed 0`);
    }
    expect((await runMain(['merge', again])).code).toBe(0);
    expect(readFileSync(join(again, 'results.csv'))).toEqual(single.csv);
  });
});
