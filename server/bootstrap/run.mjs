// Entry for `npm start`, `npm test` and `npm run dev`. Plain JavaScript on purpose: it runs before
// node_modules exists, installs npm packages when they are missing or older than package-lock.json,
// then hands over to the TypeScript bootstrap script under tsx.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, statSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const [command, ...rest] = process.argv.slice(2);
const scripts = { start: 'start.ts', test: 'test.ts', dev: 'dev.ts' };
const script = command ? scripts[command] : undefined;
if (!script) {
  console.error(`seisift: unknown bootstrap command "${command ?? ''}" (expected one of ${Object.keys(scripts).join(', ')})`);
  process.exit(2);
}

const lockFile = join(root, 'package-lock.json');
const installedMarker = join(root, 'node_modules', '.package-lock.json');
const installedAt = existsSync(installedMarker) ? statSync(installedMarker).mtimeMs : 0;
if (installedAt < statSync(lockFile).mtimeMs) {
  console.log('seisift: installing npm packages (npm ci)…');
  const npm = spawnSync('npm', ['ci', '--no-audit', '--no-fund'], { cwd: root, stdio: 'inherit' });
  if (npm.status !== 0) {
    console.error('seisift: npm ci failed; see the messages above');
    process.exit(1);
  }
}

const child = spawn(process.execPath, ['--import', 'tsx', join(root, 'server', 'bootstrap', script), ...rest], {
  cwd: root,
  stdio: 'inherit',
});
// Ctrl-C reaches the whole process group; the child shuts down by itself and we wait for it.
process.on('SIGINT', () => {});
process.on('SIGTERM', () => child.kill('SIGTERM'));
child.on('exit', (code, signal) => process.exit(code ?? (signal ? 1 : 0)));
