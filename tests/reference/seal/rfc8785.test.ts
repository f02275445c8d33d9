/**
 * Canonical JSON against RFC 8785 (JSON Canonicalization Scheme).
 * Source: RFC 8785, section 3.2.2 (the "numbers / string / literals" example and its canonical
 * output), section 3.2.3 (sorting of object properties by UTF-16 code units) and Appendix B
 * (number serialisation samples, IEEE 754 bit patterns with their expected text).
 * The examples were typed from memory; the section 3.2.2 example agrees with the test data that
 * ships with the `canonicalize` package (test/testdata/values.json), the JCS test vectors of the
 * RFC's authors, which are also checked below (source: canonicalize package test data).
 */
import fs from 'node:fs';
import path from 'node:path';
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { CanonicalJsonError, canonicalJson } from '../../../server/seal/canonical-json.ts';

const canonicalText = (jsonText: string) => canonicalJson(JSON.parse(jsonText));

describe('RFC 8785 section 3.2.2: serialisation of primitive data types (source: RFC 8785, from memory)', () => {
  it('the example object canonicalises to the text given in the RFC', () => {
    const input = String.raw`{
      "numbers": [333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001],
      "string": "\u20ac$\u000F\u000aA'\u0042\u0022\u005c\\\"\/",
      "literals": [null, true, false]
    }`;
    const expected = String.raw`{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\u000f\nA'B\"\\\\\"/"}`;
    expect(canonicalText(input)).toBe(expected);
  });

  it.each([
    ['1e+30', '1e+30'],
    ['4.50', '4.5'],
    ['0.002', '0.002'],
    ['1e-7', '1e-7'],
    ['-0', '0'],
    ['333333333.33333329', '333333333.3333333'],
    ['1E30', '1e+30'],
    ['2e-3', '0.002'],
  ])('number %s is written %s (source: RFC 8785 section 3.2.2.3, from memory)', (text, expected) => {
    expect(canonicalText(text)).toBe(expected);
  });
});

describe('RFC 8785 section 3.2.3: sorting of object properties (source: RFC 8785, from memory)', () => {
  const input = String.raw`{
    "\u20ac": "Euro Sign",
    "\r": "Carriage Return",
    "\ufb33": "Hebrew Letter Dalet With Dagesh",
    "1": "One",
    "\ud83d\ude00": "Emoji: Grinning Face",
    "\u0080": "Control",
    "\u00f6": "Latin Small Letter O With Diaeresis"
  }`;

  it('orders the members by the UTF-16 code units of their names', () => {
    // The RFC lists the sorted values in this order; the emoji (D83D DE00) sorts before U+FB33
    // because the comparison is by UTF-16 code unit, not by code point.
    const expectedOrder = [
      'Carriage Return',
      'One',
      'Control',
      'Latin Small Letter O With Diaeresis',
      'Euro Sign',
      'Emoji: Grinning Face',
      'Hebrew Letter Dalet With Dagesh',
    ];
    const text = canonicalText(input);
    const order = [...text.matchAll(/:"([^"]*)"/g)].map((m) => m[1]);
    expect(order).toEqual(expectedOrder);
  });

  it('writes the names as JSON.stringify escapes them (only \\r escaped here)', () => {
    expect(canonicalText(input)).toBe(
      '{"\\r":"Carriage Return","1":"One","\u0080":"Control","\u00f6":"Latin Small Letter O With Diaeresis",' +
        '"\u20ac":"Euro Sign","\ud83d\ude00":"Emoji: Grinning Face","\ufb33":"Hebrew Letter Dalet With Dagesh"}',
    );
  });
});

function fromBits(hex: string): number {
  const view = new DataView(new ArrayBuffer(8));
  view.setBigUint64(0, BigInt(`0x${hex}`));
  return view.getFloat64(0);
}

describe('RFC 8785 Appendix B: number serialisation samples (source: RFC 8785, from memory)', () => {
  it.each([
    ['0000000000000000', '0'],
    ['8000000000000000', '0'],
    ['0000000000000001', '5e-324'],
    ['8000000000000001', '-5e-324'],
    ['7fefffffffffffff', '1.7976931348623157e+308'],
    ['ffefffffffffffff', '-1.7976931348623157e+308'],
    ['4340000000000000', '9007199254740992'],
    ['c340000000000000', '-9007199254740992'],
    ['4430000000000000', '295147905179352830000'],
    ['44b52d02c7e14af5', '9.999999999999997e+22'],
    ['44b52d02c7e14af6', '1e+23'],
    ['44b52d02c7e14af7', '1.0000000000000001e+23'],
    ['444b1ae4d6e2ef4e', '999999999999999700000'],
    ['444b1ae4d6e2ef4f', '999999999999999900000'],
    ['444b1ae4d6e2ef50', '1e+21'],
    ['3eb0c6f7a0b5ed8c', '9.999999999999997e-7'],
    ['3eb0c6f7a0b5ed8d', '0.000001'],
    ['41b3de4355555553', '333333333.3333332'],
    ['41b3de4355555554', '333333333.33333325'],
    ['41b3de4355555555', '333333333.3333333'],
    ['41b3de4355555556', '333333333.3333334'],
    ['41b3de4355555557', '333333333.33333343'],
    ['becbf647612f3696', '-0.0000033333333333333333'],
    ['43143ff3c1cb0959', '1424953923781206.2'],
  ])('IEEE 754 %s is written %s', (bits, expected) => {
    expect(canonicalJson(fromBits(bits))).toBe(expected);
  });

  it.each([
    ['7fffffffffffffff', 'NaN'],
    ['7ff0000000000000', 'Infinity'],
  ])('IEEE 754 %s (%s) is an error, as the RFC requires', (bits) => {
    expect(() => canonicalJson(fromBits(bits))).toThrow(CanonicalJsonError);
  });
});

describe('JCS test vectors shipped with the canonicalize package (source: canonicalize package test data)', () => {
  const packageDir = path.dirname(createRequire(import.meta.url).resolve('canonicalize/package.json'));
  const inputDir = path.join(packageDir, 'test', 'testdata', 'input');
  const names = fs.existsSync(inputDir) ? fs.readdirSync(inputDir).filter((n) => n.endsWith('.json')) : [];

  it('the test vectors are present', () => {
    expect(names.length).toBeGreaterThanOrEqual(5);
  });

  it.each(names)('%s', (name) => {
    const input = fs.readFileSync(path.join(inputDir, name), 'utf8');
    const expected = fs.readFileSync(path.join(packageDir, 'test', 'testdata', 'output', name), 'utf8').replace(/\n$/, '');
    expect(canonicalText(input)).toBe(expected);
  });
});
