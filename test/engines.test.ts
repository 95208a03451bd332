// package.json's `engines` says which Node versions the project runs on: every installed package
// that states its own Node range must accept all of ours (vite 8, @sveltejs/vite-plugin-svelte 7,
// rolldown: ^20.19 || >=22.12; vitest 4: ^20 || ^22 || >=24; assemblyscript: >=20 and npm >=10), and
// .nvmrc names a version inside it. Range arithmetic by `semver`, the parser npm itself uses.

import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

interface Semver {
  subset(sub: string, dom: string): boolean;
  satisfies(version: string, range: string): boolean;
  validRange(range: string): string | null;
}
const semver = ((await import('semver' as string)) as { default: Semver }).default;

const root = fileURLToPath(new URL('../', import.meta.url));
const manifest = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8'));
const ours: string = manifest.engines.node;

function installedPackages(): { name: string; node?: string; npm?: string }[] {
  const modules = join(root, 'node_modules');
  const names = readdirSync(modules)
    .filter((name) => !name.startsWith('.'))
    .flatMap((name) => (name.startsWith('@') ? readdirSync(join(modules, name)).map((inner) => `${name}/${inner}`) : [name]));
  return names.flatMap((name) => {
    try {
      const pkg = JSON.parse(readFileSync(join(modules, name, 'package.json'), 'utf8'));
      return [{ name, node: pkg.engines?.node, npm: pkg.engines?.npm }];
    } catch {
      return [];
    }
  });
}

describe('engines', () => {
  const packages = installedPackages();

  it('is a valid range', () => expect(semver.validRange(ours)).not.toBeNull());

  it('is no wider than any installed package allows', () => {
    const stated = packages.filter((p) => typeof p.node === 'string' && semver.validRange(p.node!) !== null);
    expect(stated.length).toBeGreaterThan(10);
    const tooWide = stated.filter((p) => !semver.subset(ours, p.node!)).map((p) => `${p.name} needs node ${p.node}`);
    expect(tooWide).toEqual([]);
  });

  it('is not narrower than needed: its lowest versions are the toolchain\'s own lower bounds', () => {
    // the Vite 8 line's bounds, which are the tightest of the toolchain
    for (const version of ['20.19.0', '22.12.0', '24.0.0']) expect(semver.satisfies(version, ours), version).toBe(true);
    for (const version of ['20.18.3', '21.7.3', '22.11.0', '23.11.0']) expect(semver.satisfies(version, ours), version).toBe(false);
  });

  it('states the npm version the packages ask for', () => {
    for (const p of packages.filter((p) => p.npm)) expect(semver.subset(manifest.engines.npm, p.npm!), p.name).toBe(true);
  });

  it('.nvmrc names a version inside it, and so does the Node running this test', () => {
    const nvmrc = readFileSync(join(root, '.nvmrc'), 'utf8').trim();
    expect(semver.satisfies(nvmrc, ours)).toBe(true);
    expect(semver.satisfies(process.version, ours)).toBe(true);
  });
});
