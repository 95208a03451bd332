// Numeric command-line options read plain decimal numbers only. JavaScript's Number() reads `0x10`
// as 16, `0b11` as 3, ` 5` as 5, `''` as 0 and `Infinity` as a number (ECMA-262, StringToNumber,
// checked in the first test below so that the refusals are known to guard something real); each of
// those is refused with exit 2, the message naming the option, what it expects and what was found.

import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { pronk } from './pronk-cli.js';
import { decimalDigits, decimalNumber } from '../src/core/decimal.js';
import { closeWorkerPool } from '../src/worker/pool.js';

afterAll(async () => {
  await closeWorkerPool();
});

const demo = join(import.meta.dirname, '..', 'scenarios', 'demo.json');

const ODD = ['0x10', '0X1A', '0b11', '0o17', '1_000', ' 5', '5 ', '\t5', 'Infinity', '-Infinity', '+Infinity', '1e', '.', '1.2.3', '5x', ''];

describe('decimal numbers', () => {
  it('JavaScript reads the odd forms as numbers (ECMA-262 StringToNumber), the decimal readers do not', () => {
    // ECMA-262 §7.1.4.1.1: hex, binary and octal literals, blanks and Infinity are numeric strings
    expect([Number('0x10'), Number('0b11'), Number('0o17'), Number(' 5'), Number('')]).toEqual([16, 3, 15, 5, 0]);
    for (const text of ODD) {
      expect(decimalNumber(text), JSON.stringify(text)).toBeNaN();
      expect(decimalDigits(text), JSON.stringify(text)).toBeNaN();
    }
  });

  it('reads decimals with sign, point and exponent', () => {
    // plain decimal notation: the values are the literals themselves
    const cases: [string, number][] = [['5', 5], ['+5', 5], ['-3', -3], ['0.25', 0.25], ['.5', 0.5], ['5.', 5], ['1e-3', 1e-3], ['-2.5E+2', -250], ['007', 7]];
    for (const [text, value] of cases) expect(decimalNumber(text), text).toBe(value);
    expect(decimalDigits('42')).toBe(42);
    expect(decimalDigits('+42')).toBe(42);
    expect(decimalDigits('-1')).toBeNaN();
    expect(decimalDigits('1e3')).toBeNaN();
  });
});

describe('numeric options refuse non-decimal forms with exit 2', () => {
  // one option of each parser: the shared integer and number options, simulate's own, basin's and
  // scan's axes, deadbeat's ranges, recover's numbers
  const cases: { args: (v: string) => string[]; flag: string }[] = [
    { args: (v) => ['simulate', demo, '--strides', v], flag: '--strides' },
    { args: (v) => ['simulate', demo, '--strides', '1', '--trace-interval', v], flag: '--trace-interval' },
    { args: (v) => ['map', demo, '--samples', v], flag: '--samples' },
    { args: (v) => ['robustness', demo, '--sigma', v, '--rollouts', '1'], flag: '--sigma' },
    { args: (v) => ['stepdown', demo, '--resolution', v], flag: '--resolution' },
    { args: (v) => ['basin', demo, '--heights', `${v}:1.2:2`, '--speeds', '4:5:2'], flag: '--heights' },
    { args: (v) => ['basin', demo, '--heights', `1:1.2:${v}`, '--speeds', '4:5:2'], flag: '--heights' },
    { args: (v) => ['basin', demo, '--tolerance', v], flag: '--tolerance' },
    { args: (v) => ['scan', demo, '--x', `policy.angle.attack_at_apex_deg:${v}:66:2`, '--y', 'body.mass_kg:70:80:2'], flag: '--x' },
    { args: (v) => ['scan', demo, '--x', `policy.angle.attack_at_apex_deg:60:66:${v}`, '--y', 'body.mass_kg:70:80:2'], flag: '--x' },
    { args: (v) => ['deadbeat', demo, '--ground', `${v}:0.01`, '--knots', '3'], flag: '--ground' },
    { args: (v) => ['deadbeat', demo, '--ground=-0.01:0.01', '--knots', v], flag: '--knots' },
  ];
  for (const { args, flag } of cases) {
    it(`${args('V').slice(0, 1)[0]} ${flag}`, async () => {
      for (const value of ['0x10', '1_000', ' 5', 'Infinity', '0b1']) {
        const run = await pronk(args(value));
        expect(run.code, `${flag} ${JSON.stringify(value)}: ${run.stderr}`).toBe(2);
        expect(run.stderr).toContain(flag);
        expect(run.stderr).toMatch(/expected/);
        expect(run.stderr).toContain(JSON.stringify(value).slice(1, -1).trim());
        expect(run.stdout).toBe('');
      }
    });
  }

  it('says the value must be written in decimal when it is a number in another notation', async () => {
    const run = await pronk(['robustness', demo, '--sigma', '0x10']);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/--sigma: expected .*written in decimal.*found "0x10"/);
  });

  it('recover reads its kicks in decimal', async () => {
    const run = await pronk(['recover', demo, '--strides-after', '3', '--kick-forward', '0x1']);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/--kick-forward/);
  });
});
