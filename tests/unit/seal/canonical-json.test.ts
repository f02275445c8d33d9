import { describe, expect, it } from 'vitest';
import { CanonicalJsonError, canonicalJson } from '../../../server/seal/canonical-json.ts';

function errorOf(value: unknown): CanonicalJsonError {
  try {
    canonicalJson(value);
  } catch (err) {
    if (err instanceof CanonicalJsonError) return err;
    throw err;
  }
  throw new Error('expected canonicalJson to refuse the value');
}

describe('canonicalJson', () => {
  it('sorts members at every depth and leaves out whitespace', () => {
    expect(canonicalJson({ b: [3, { z: 1, a: 2 }], a: 'x' })).toBe('{"a":"x","b":[3,{"a":2,"z":1}]}');
  });

  it('gives the same text whatever order the members were built in', () => {
    const one = { region: 'Nordvale North', p50: 12.5, members: [1, 2, 3] };
    const two = { members: [1, 2, 3], p50: 12.5, region: 'Nordvale North' };
    expect(canonicalJson(one)).toBe(canonicalJson(two));
  });

  it('leaves out undefined members, as JSON.stringify does', () => {
    expect(canonicalJson({ a: 1, b: undefined })).toBe('{"a":1}');
  });

  it.each([
    ['NaN', { rows: [{ p50: NaN }] }, '$.rows[0].p50', 'NaN'],
    ['Infinity', { a: { b: -Infinity } }, '$.a.b', 'Infinity'],
    ['undefined in an array', { list: [1, undefined, 3] }, '$.list[1]', 'undefined'],
    ['a BigInt', { big: 10n }, '$.big', 'BigInt'],
    ['a function', { f: () => 1 }, '$.f', 'function'],
    ['a function in an array', [() => 1], '$[0]', 'function'],
    ['a symbol', { s: Symbol('x') }, '$.s', 'symbol'],
    ['a Date', { at: new Date(0) }, '$.at', 'Date'],
    ['a Map', { m: new Map() }, '$.m', 'Map'],
    ['a typed array', { t: new Float64Array(2) }, '$.t', 'Float64Array'],
    ['an unpaired surrogate in a string', { s: 'a\ud800b' }, '$.s', 'surrogate'],
    ['an unpaired surrogate in a member name', { ['\udc00']: 1 }, '$["\\udc00"]', 'surrogate'],
    ['a name that is no identifier', { 'run id': [NaN] }, '$["run id"][0]', 'NaN'],
    ['undefined at the top', undefined, '$', 'undefined'],
  ])('refuses %s, naming its path', (_what, value, path, word) => {
    const err = errorOf(value);
    expect(err.path).toBe(path);
    expect(err.message).toContain(path);
    expect(err.message).toContain(word);
  });

  it('refuses a hole in a sparse array', () => {
    const sparse: unknown[] = [1];
    sparse[2] = 3;
    expect(errorOf({ s: sparse }).path).toBe('$.s[1]');
  });

  it('refuses a cycle instead of overflowing the stack', () => {
    const a: Record<string, unknown> = { x: 1 };
    a.self = a;
    expect(errorOf({ a }).message).toContain('cycle');
  });

  it('accepts the same object twice when it is not a cycle', () => {
    const shared = { v: 1 };
    expect(canonicalJson({ a: shared, b: shared })).toBe('{"a":{"v":1},"b":{"v":1}}');
  });

  it('accepts objects without a prototype (as JSON.parse of "__proto__" can give)', () => {
    const bare = Object.create(null) as Record<string, unknown>;
    bare.k = 'v';
    expect(canonicalJson(bare)).toBe('{"k":"v"}');
  });

  it('keeps a correctly paired surrogate (an emoji)', () => {
    expect(canonicalJson({ e: '\ud83d\ude00' })).toBe('{"e":"\ud83d\ude00"}');
  });
});
