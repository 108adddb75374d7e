// Runs before `vitest run` in `npm test`: makes sure the Debian packages the tests need
// are installed (installing them when run as root), checks types, then builds the app for the e2e tests.
import { execFileSync, spawnSync } from 'node:child_process';
import { ensureBuilt } from './build-if-needed.mjs';

// chromium: e2e browser; postgresql: second database backend; gcc-arm-none-eabi and
// libnewlib-arm-none-eabi: cross-compiling generated C; cppcheck: static checks of generated C.
const PACKAGES = ['chromium', 'postgresql', 'gcc-arm-none-eabi', 'libnewlib-arm-none-eabi', 'cppcheck'];

function isInstalled(pkg) {
  const r = spawnSync('dpkg-query', ['-W', '-f=${Status}', pkg], { encoding: 'utf8' });
  return r.status === 0 && r.stdout.includes('install ok installed');
}

const hasDpkg = spawnSync('dpkg-query', ['--version'], { stdio: 'ignore' }).status === 0;
if (!hasDpkg) {
  console.error('[pretest] this test suite needs a Debian-based system (dpkg/apt) for chromium, postgresql, gcc-arm-none-eabi and cppcheck.');
  process.exit(1);
}
const missing = PACKAGES.filter((p) => !isInstalled(p));
if (missing.length > 0) {
  const command = `apt-get update && apt-get install -y ${missing.join(' ')}`;
  if (typeof process.getuid === 'function' && process.getuid() === 0) {
    console.log(`[pretest] installing missing Debian packages: ${missing.join(', ')}`);
    try {
      execFileSync('apt-get', ['update'], { stdio: 'inherit' });
      execFileSync('apt-get', ['install', '-y', '--no-install-recommends', ...missing], {
        stdio: 'inherit',
        env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' },
      });
    } catch {
      console.error(`[pretest] installing failed; run by hand:\n  ${command}`);
      process.exit(1);
    }
  } else {
    console.error(`[pretest] missing Debian packages: ${missing.join(', ')}. Install them with:\n  sudo sh -c '${command}'`);
    process.exit(1);
  }
}

// The generated firmware is compiled and run in the tests: a host C toolchain and Rust with clippy and rustfmt.
const TOOLS = [
  ['gcc', ['--version'], 'apt-get install -y gcc'],
  ['make', ['--version'], 'apt-get install -y make'],
  ['cargo', ['--version'], 'install Rust with rustup (https://rustup.rs is not reachable here: use the machine image\'s toolchain)'],
  ['cargo', ['clippy', '--version'], 'rustup component add clippy'],
  ['cargo', ['fmt', '--version'], 'rustup component add rustfmt'],
];
const cargoBin = `${process.env.CARGO_HOME ?? `${process.env.HOME ?? ''}/.cargo`}/bin`;
process.env.PATH = `${cargoBin}:${process.env.PATH ?? ''}`;
for (const [cmd, args, fix] of TOOLS) {
  if (spawnSync(cmd, args, { stdio: 'ignore' }).status !== 0) {
    console.error(`[pretest] \`${cmd} ${args.join(' ')}\` does not run; the generated-code tests need it. Fix: ${fix}`);
    process.exit(1);
  }
}

// Types of every .ts, .tsx and .astro file (astro check runs the TypeScript checker over all of them).
const check = spawnSync(process.execPath, ['node_modules/astro/astro.js', 'check'], { stdio: ['ignore', 'pipe', 'pipe'], encoding: 'utf8', env: { ...process.env, ASTRO_TELEMETRY_DISABLED: '1' } });
if (check.status !== 0) {
  process.stdout.write(check.stdout);
  process.stderr.write(check.stderr);
  console.error('[pretest] `astro check` found type errors (above); fix them first.');
  process.exit(1);
}

try {
  await ensureBuilt({ log: (m) => console.log(m.replace('[quiesce]', '[pretest]')) });
} catch (error) {
  console.error(`[pretest] building the app for the e2e tests failed: ${error.message}`);
  process.exit(1);
}
console.log('[pretest] Debian packages present; types check; app build is current.');
