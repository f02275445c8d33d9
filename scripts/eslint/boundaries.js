/**
 * The import directions of ARCHITECTURE.md as one ESLint rule:
 *   src/ -> shared/ only (never server/); server/ -> shared/ only (never src/); shared/ imports neither;
 *   server/science and server/ingest import nothing from db, routes, services, jobs, mail, auth or dev
 *   (science imports nothing outside science/ and shared/);
 *   routes may not reach db directly (routes -> services -> db);
 *   a feature folder in src/ may not import another feature's internals.
 */
import path from 'node:path';

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), '..', '..');

function layerOf(file) {
  const rel = path.relative(root, file).split(path.sep);
  if (rel[0] === 'src') return { top: 'src', part: rel[1], feature: rel[1] === 'features' ? rel[2] : null };
  if (rel[0] === 'server') return { top: 'server', part: rel.length > 2 ? rel[1] : '(root)' };
  if (rel[0] === 'shared') return { top: 'shared' };
  return { top: rel[0] };
}

function resolveTarget(spec, fromFile) {
  if (spec.startsWith('@/')) return path.join(root, 'src', spec.slice(2));
  if (spec.startsWith('@shared/')) return path.join(root, 'shared', spec.slice(8));
  if (spec.startsWith('.')) return path.resolve(path.dirname(fromFile), spec);
  return null; // a package
}

const SERVER_BACK_END = new Set(['db', 'routes', 'services', 'jobs', 'mail', 'auth', 'dev', 'cli', '(root)']);

function violation(from, to) {
  if (from.top === 'src' && to.top === 'server') return 'the client (src/) may import shared/ but never server/';
  if (from.top === 'server' && to.top === 'src') return 'the server may import shared/ but never the client (src/)';
  if (from.top === 'shared' && (to.top === 'src' || to.top === 'server')) return 'shared/ is imported by both sides and imports neither';
  if (from.top === 'server' && from.part === 'science' && to.top === 'server' && to.part !== 'science')
    return 'server/science is pure numerics: it imports nothing from the rest of server/';
  if (from.top === 'server' && from.part === 'ingest' && to.top === 'server' && SERVER_BACK_END.has(to.part))
    return 'server/ingest reads files into the canonical grid: no database, HTTP, jobs or mail';
  if (from.top === 'server' && from.part === 'routes' && to.top === 'server' && to.part === 'db')
    return 'routes call services; only services (and jobs) reach the database';
  if (from.top === 'src' && from.feature && to.top === 'src' && to.feature && to.feature !== from.feature)
    return `feature "${from.feature}" may not import the internals of feature "${to.feature}"; move the shared piece to src/components or src/lib`;
  return null;
}

/** @type {import('eslint').ESLint.Plugin} */
export default {
  rules: {
    'import-directions': {
      meta: { type: 'problem', schema: [], docs: { description: 'import directions of ARCHITECTURE.md' } },
      create(context) {
        const fromFile = context.filename;
        const from = layerOf(fromFile);
        const check = (node) => {
          if (!node.source || typeof node.source.value !== 'string') return;
          const target = resolveTarget(node.source.value, fromFile);
          if (!target) return;
          const message = violation(from, layerOf(target));
          if (message) context.report({ node: node.source, message });
        };
        return { ImportDeclaration: check, ExportNamedDeclaration: check, ExportAllDeclaration: check, ImportExpression: check };
      },
    },
  },
};
