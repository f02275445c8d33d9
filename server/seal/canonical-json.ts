/**
 * Canonical JSON of RFC 8785 (JSON Canonicalization Scheme, JCS): object members sorted by the
 * UTF-16 code units of their names, no whitespace, numbers in the ECMAScript shortest form,
 * strings escaped as ECMAScript JSON.stringify does.
 *
 * The serialisation itself is the `canonicalize` package (an implementation by the RFC's
 * authors). That package quietly turns some values into something else (undefined in an array
 * becomes null, a function in an array becomes the bare word `undefined`, a Map becomes {},
 * a hole in a sparse array vanishes), which would seal a document that differs from the data
 * the caller holds. So every value is checked first, and anything JSON cannot carry
 * faithfully is refused with the path to it.
 */
import canonicalize from 'canonicalize';

/** A value JSON can carry unchanged. */
export type JsonValue = null | boolean | number | string | JsonValue[] | { [key: string]: JsonValue };
export type JsonObject = { [key: string]: JsonValue };

export class CanonicalJsonError extends Error {
  constructor(
    readonly path: string,
    reason: string,
  ) {
    super(`cannot canonicalise ${path}: ${reason}`);
    this.name = 'CanonicalJsonError';
  }
}

const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

function memberPath(parent: string, key: string): string {
  return /^[A-Za-z_$][\w$]*$/.test(key) ? `${parent}.${key}` : `${parent}[${JSON.stringify(key)}]`;
}

function checkString(value: string, path: string, what: string): void {
  // I-JSON (RFC 7493), which RFC 8785 builds on, forbids unpaired surrogates.
  if (LONE_SURROGATE.test(value)) throw new CanonicalJsonError(path, `${what} holds an unpaired UTF-16 surrogate`);
}

function isPlainObject(value: object): boolean {
  const proto = Object.getPrototypeOf(value) as unknown;
  return proto === Object.prototype || proto === null;
}

function checkValue(value: unknown, path: string, ancestors: Set<object>): void {
  switch (typeof value) {
    case 'string':
      return checkString(value, path, 'the string');
    case 'boolean':
      return;
    case 'number':
      if (!Number.isFinite(value)) throw new CanonicalJsonError(path, `${String(value)} is not a JSON number`);
      return;
    case 'undefined':
      throw new CanonicalJsonError(path, 'undefined is not a JSON value');
    case 'bigint':
      throw new CanonicalJsonError(path, 'a BigInt is not a JSON number (convert it to a number or a string)');
    case 'function':
    case 'symbol':
      throw new CanonicalJsonError(path, `a ${typeof value} is not a JSON value`);
  }
  if (value === null) return;
  const object = value as object;
  if (ancestors.has(object)) throw new CanonicalJsonError(path, 'the value refers to itself (a cycle)');
  ancestors.add(object);
  if (Array.isArray(object)) {
    for (let i = 0; i < object.length; i++) {
      if (!(i in object)) throw new CanonicalJsonError(`${path}[${i}]`, 'a hole in a sparse array is not a JSON value');
      checkValue(object[i], `${path}[${i}]`, ancestors);
    }
  } else if (isPlainObject(object)) {
    for (const [key, member] of Object.entries(object)) {
      const memberAt = memberPath(path, key);
      checkString(key, memberAt, 'the member name');
      // An undefined member is left out, as JSON.stringify does: reading it back gives undefined again.
      if (member !== undefined) checkValue(member, memberAt, ancestors);
    }
  } else {
    const kind = (object.constructor as { name?: string } | undefined)?.name ?? 'object';
    throw new CanonicalJsonError(path, `a ${kind} is not a plain JSON object or array (convert it first)`);
  }
  ancestors.delete(object);
}

/**
 * The RFC 8785 canonical JSON text of a value.
 * @throws CanonicalJsonError naming the path ($, $.rows[3].p50, ...) of the first value JSON
 *   cannot carry faithfully: NaN, Infinity, undefined in an array, BigInt, functions, symbols,
 *   sparse-array holes, cycles, unpaired surrogates, and non-plain objects (Date, Map, typed arrays...).
 */
export function canonicalJson(value: unknown): string {
  checkValue(value, '$', new Set());
  const text = canonicalize(value);
  if (text === undefined) throw new CanonicalJsonError('$', 'the value has no JSON form');
  return text;
}
