#!/usr/bin/env node
// Check deploy/container/Dockerfile as far as a machine without docker allows: its steps are run
// in a scratch folder that stands for the image's root, with plain npm (the image's own tool):
//   node scripts/container-check.mjs [--no-pack]
// FROM is compared with this Node's major version; COPY takes from the build context
// (deploy/container, after scripts/pack.mjs has filled packs/); RUN runs under /bin/sh in the
// current WORKDIR; ENV is applied with absolute paths moved into the scratch root; USER is
// recorded (the scratch run stays this user). Then the ENTRYPOINT runs the Kubernetes example's
// generate command (docs/datasets.md) as pod 3 of 8, and its part must equal, byte for byte, the
// part the workspace's own binary writes. Exit 0 passed, 1 failed (the step and its output).
import { execFileSync, spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const context = join(root, 'deploy', 'container');
const fail = (message) => {
  process.stderr.write(`FAIL: ${message}\n`);
  process.exit(1);
};

if (!process.argv.includes('--no-pack')) {
  execFileSync(process.execPath, [join(root, 'scripts', 'pack.mjs'), join(context, 'packs'), '--no-setup'], { stdio: ['ignore', 'ignore', 'inherit'] });
}

// The instructions, continuation lines joined, comments dropped.
const instructions = readFileSync(join(context, 'Dockerfile'), 'utf8')
  .replace(/\\\n/g, ' ')
  .split('\n')
  .map((l) => l.trim())
  .filter((l) => l !== '' && !l.startsWith('#'))
  .map((l) => {
    const [, op, rest] = /^(\w+)\s+(.*)$/.exec(l) ?? fail(`not an instruction: ${l}`);
    return { op: op.toUpperCase(), rest };
  });

const scratch = mkdtempSync(join(tmpdir(), 'pathweave-container-'));
const image = join(scratch, 'root'); // "/" of the image
mkdirSync(image);
const inImage = (p) => join(image, p);
const env = { ...process.env };
let workdir = '/';
let entrypoint = [];
let user = 'root';
for (const { op, rest } of instructions) {
  switch (op) {
    case 'FROM': {
      const major = /^node:(\d+)/.exec(rest)?.[1];
      if (major === undefined) fail(`FROM ${rest}: expected a node:<major> image`);
      if (`v${major}` !== process.version.split('.')[0]) fail(`FROM ${rest}: this check runs Node ${process.version}, another major version`);
      console.log(`FROM ${rest}: Node ${process.version} here`);
      break;
    }
    case 'WORKDIR':
      workdir = resolve(workdir, rest);
      mkdirSync(inImage(workdir), { recursive: true });
      break;
    case 'COPY': {
      const parts = rest.split(/\s+/);
      const dest = resolve(workdir, parts.pop());
      for (const src of parts) {
        if (!existsSync(join(context, src))) fail(`COPY ${src}: not in the build context ${context} (run node scripts/pack.mjs deploy/container/packs)`);
        const target = dest.endsWith('/') || parts.length > 1 || rest.trim().endsWith('/') ? join(inImage(dest), src.split('/').pop()) : inImage(dest);
        mkdirSync(dirname(target), { recursive: true });
        cpSync(join(context, src), target, { recursive: true });
      }
      break;
    }
    case 'RUN': {
      const r = spawnSync('/bin/sh', ['-c', rest], { cwd: inImage(workdir), env, encoding: 'utf8' });
      if (r.status !== 0) fail(`RUN ${rest}\nexit ${r.status}\n${r.stdout}${r.stderr}`);
      console.log(`RUN ${rest.slice(0, 100)}${rest.length > 100 ? '...' : ''}: ok`);
      break;
    }
    case 'ENV': {
      const [, key, value] = /^(\w+)=(.*)$/.exec(rest) ?? fail(`ENV ${rest}: expected KEY=value`);
      // Absolute paths of the image move into the scratch root; $VAR takes this environment's value.
      env[key] = value
        .split(':')
        .map((p) => (p.startsWith('/') ? inImage(p) : p.replace(/^\$(\w+)$/, (_, v) => env[v] ?? '')))
        .join(':');
      break;
    }
    case 'USER':
      user = rest;
      break;
    case 'ENTRYPOINT':
      entrypoint = JSON.parse(rest);
      break;
    case 'CMD':
      break;
    default:
      fail(`${op}: not an instruction this check knows`);
  }
}
if (entrypoint.length === 0) fail('no ENTRYPOINT');
console.log(`USER ${user} (the scratch run stays ${process.env.USER ?? 'this user'}), WORKDIR ${workdir}, ENTRYPOINT ${JSON.stringify(entrypoint)}`);

// The image's command on PATH from ENV, not the workspace's.
const which = spawnSync('/bin/sh', ['-c', `command -v ${entrypoint[0]}`], { env, encoding: 'utf8' }).stdout.trim();
if (!which.startsWith(image)) fail(`${entrypoint[0]} resolves to ${which || 'nothing'}, not to the image's install`);
const version = spawnSync(entrypoint[0], [...entrypoint.slice(1), '--version'], { env, encoding: 'utf8' });
if (version.status !== 0) fail(`${entrypoint.join(' ')} --version: exit ${version.status} ${version.stderr}`);

// The Kubernetes example's command, as pod 3 of 8, with /data a scratch folder; then the same
// part by the workspace's own binary. The .npy variant must be byte-equal; the .h5 of the
// example must hold the same tensor (its manifest's tensor sha256): HDF5 object headers carry
// modification times, so two .h5 runs differ in a few header bytes.
const data = join(scratch, 'data');
const workspace = join(scratch, 'workspace');
mkdirSync(data);
mkdirSync(workspace);
cpSync(join(root, 'examples', 'street-corner-28ghz.json'), join(inImage(workdir), 'scenario.json'));
const summary = [];
for (const ext of ['h5', 'npy']) {
  const args = ['generate', 'scenario.json', '--out', `${data}/run.part-{index}-of-{count}.${ext}`, '--shard', 'auto/8', '--workers', '1', '--quiet'];
  const pod = spawnSync(entrypoint[0], [...entrypoint.slice(1), ...args], {
    cwd: inImage(workdir),
    env: { ...env, JOB_COMPLETION_INDEX: '3' },
    encoding: 'utf8',
  });
  if (pod.status !== 0) fail(`pod 3: pathweave ${args.join(' ')}: exit ${pod.status}\n${pod.stderr}`);
  const own = spawnSync(
    process.execPath,
    [
      join(root, 'packages', 'io', 'bin', 'pathweave.js'),
      'generate',
      join(root, 'examples', 'street-corner-28ghz.json'),
      '--out',
      `${workspace}/run.part-{index}-of-{count}.${ext}`,
      '--shard',
      '3/8',
      '--workers',
      '1',
      '--quiet',
    ],
    { encoding: 'utf8' },
  );
  if (own.status !== 0) fail(`the workspace's .${ext} run: exit ${own.status}\n${own.stderr}`);
  const manifest = (dir) => JSON.parse(readFileSync(join(dir, `run.part-3-of-8.${ext}.manifest.json`), 'utf8'));
  const [m, w] = [manifest(data), manifest(workspace)];
  if (m.tensor.sha256 !== w.tensor.sha256)
    fail(`the image's .${ext} part 3 of 8 holds another tensor (sha256 ${m.tensor.sha256}) than the workspace's (${w.tensor.sha256})`);
  if (ext === 'npy') {
    for (const f of ['run.part-3-of-8.npy', 'run.part-3-of-8.npy.json'])
      if (!readFileSync(join(data, f)).equals(readFileSync(join(workspace, f)))) fail(`the image's ${f} differs from the workspace's`);
  }
  summary.push(
    `.${ext} part 3 of 8, ${m.fileBytes} bytes, tensor sha256 ${m.tensor.sha256.slice(0, 12)}...${ext === 'npy' ? ' (file and side file byte-equal)' : ''}`,
  );
}
console.log(`ok: pathweave ${version.stdout.trim()} installed by the Dockerfile's steps; as pod 3 of 8 it wrote the workspace's parts: ${summary.join('; ')}`);
rmSync(scratch, { recursive: true, force: true });
