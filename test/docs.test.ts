// The README's examples are real: every JSON scenario in it validates and runs.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseScenario } from '../src/core/scenario.js';
import { simulate } from '../src/core/simulate.js';

const readme = readFileSync(new URL('../README.md', import.meta.url), 'utf8');
const blocks = [...readme.matchAll(/```json\n([\s\S]*?)```/g)].map((m) => m[1]);

describe('README examples', () => {
  it('has a scenario example', () => expect(blocks.length).toBeGreaterThan(0));
  for (const [i, text] of blocks.entries()) {
    it(`JSON example ${i + 1} validates and runs`, async () => {
      const s = parseScenario(JSON.parse(text));
      const r = await simulate(s);
      expect(r.strides.length).toBeGreaterThan(0);
    });
  }
  it('the first paragraph states the job and the next blocks are the two set-up commands', () => {
    const paragraphs = readme.split(/\n\n/);
    expect(paragraphs[1]).toMatch(/spring-loaded\s+inverted\s+pendulum/);
    const commands = [...readme.matchAll(/```sh\n(.*?)\n```/g)].map((m) => m[1]);
    expect(commands[0]).toBe('npm ci && npm start');
    expect(commands[1]).toBe('npm ci && npm test');
  });
});
