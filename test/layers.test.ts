/**
 * Dependencies point one way (DEVELOPERS.md "Layers"): cli → daemon, demo,
 * corpus → formats → contract → core. Read from the import statements of
 * every source file (static `import … from`, `export … from`, `import()`,
 * and the `new URL('…', import.meta.url)` that starts a worker), resolved
 * against the file's folder; an import a layer may not make fails with the
 * file, the line and the rule it breaks.
 *
 * @example
 *   npx vitest run test/layers.test.ts
 */
import { readFileSync, readdirSync } from 'node:fs';
import { dirname, join, normalize, relative } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT } from './helpers/daemon.js';

/** Each layer and the layers it may import, besides itself. Order matters only for reading. */
const MAY_IMPORT: Record<string, readonly string[]> = {
  core: [],
  /** The wire format, built on the data model. */
  contract: ['core'],
  'bridge/formats': ['core', 'contract'],
  'bridge/corpus': ['bridge/formats', 'core', 'contract'],
  /** At the corpus's level: serves and asks the shards' queues, opening shards through bridge/corpus. */
  'bridge/queue': ['bridge/corpus', 'bridge/formats', 'core', 'contract'],
  'bridge/daemon': ['bridge/corpus', 'bridge/formats', 'core', 'contract'],
  'bridge/demo': ['bridge/corpus', 'bridge/formats', 'core', 'contract'],
  'bridge/cli': ['bridge/daemon', 'bridge/demo', 'bridge/queue', 'bridge/corpus', 'bridge/formats', 'core', 'contract'],
  /** bin entry point: dist/bridge/cli.js */
  bridge: ['bridge/cli'],
  ui: ['core', 'contract'],
};

/** The layer a repository path belongs to: the longest folder prefix MAY_IMPORT names. */
function layerOf(path: string): string | null {
  const folders = Object.keys(MAY_IMPORT).sort((a, b) => b.length - a.length);
  return folders.find((f) => path.startsWith(`${f}/`)) ?? null;
}

/** Why `from` may not import `to`, or null when it may. Paths are relative to the repository. */
function forbidden(from: string, to: string): string | null {
  const a = layerOf(from);
  const b = layerOf(to);
  if (!a) return `${from} is in no layer; add its folder to MAY_IMPORT`;
  if (!b) return `${to} is in no layer (tests and tools are not imported by sources)`;
  if (a === b || MAY_IMPORT[a].includes(b)) return null;
  return `${a} may import ${[a, ...MAY_IMPORT[a]].join(', ')}; not ${b}`;
}

/** Packages core/ and contract/ may not use: they stay pure, with no I/O (any bare specifier at all). */
const pureLayer = (layer: string | null) => layer === 'core' || layer === 'contract';

interface Edge {
  from: string;
  line: number;
  spec: string;
}

const SPEC = /(?:\bfrom\s*|\bimport\s*\(\s*|^\s*import\s+|new URL\(\s*)(['"])([^'"]+)\1/g;

function edges(file: string): Edge[] {
  const out: Edge[] = [];
  readFileSync(join(ROOT, file), 'utf8')
    .split('\n')
    .forEach((text, i) => {
      if (/^\s*(\*|\/\/)/.test(text)) return; // doc comments show examples, not imports
      for (const m of text.matchAll(SPEC)) out.push({ from: file, line: i + 1, spec: m[2] });
    });
  return out;
}

function sources(dir: string): string[] {
  return readdirSync(join(ROOT, dir), { withFileTypes: true }).flatMap((d) => {
    const path = `${dir}/${d.name}`;
    if (d.isDirectory()) return d.name === 'dist' || d.name === 'node_modules' ? [] : sources(path);
    return /\.(ts|mjs)$/.test(d.name) && !d.name.endsWith('.d.ts') ? [path] : [];
  });
}

const FILES = ['core', 'contract', 'bridge', 'ui/src'].flatMap(sources);

describe('the rule itself', () => {
  it('lets a layer import itself and the layers below it, and nothing above', () => {
    expect(forbidden('bridge/cli/commands/report.ts', 'bridge/corpus/open-corpus.ts')).toBeNull();
    expect(forbidden('bridge/daemon/daemon.ts', 'bridge/daemon/scorer.ts')).toBeNull();
    expect(forbidden('ui/src/state.ts', 'contract/events.ts')).toBeNull();
    expect(forbidden('bridge/formats/presets.ts', 'bridge/daemon/package-root.ts')).toMatch(/bridge\/formats may import .*; not bridge\/daemon/);
    expect(forbidden('bridge/corpus/open-corpus.ts', 'bridge/cli/progress.ts')).toMatch(/not bridge\/cli/);
    expect(forbidden('core/match.ts', 'bridge/formats/midi-file.ts')).toMatch(/core may import core; not bridge\/formats/);
    expect(forbidden('ui/src/connection.ts', 'bridge/daemon/web-server.ts')).toMatch(/ui may import/);
    expect(forbidden('bridge/daemon/daemon.ts', 'bridge/demo/tunes.ts')).toMatch(/not bridge\/demo/);
  });

  it('finds every kind of import statement, and skips examples in comments', () => {
    expect(edges('bridge/cli/commands/corpus.ts').map((e) => e.spec)).toContain('../../corpus/build-worker.js');
    expect(edges('bridge/daemon/scorer.ts').map((e) => e.spec)).toContain('./scoring-worker.js');
    expect(edges('ui/src/main.ts').map((e) => e.spec)).toContain('./overlay.css');
    expect(edges('bridge/daemon/scoring-worker.ts').map((e) => e.spec)).not.toContain('./scoring-worker.js');
  });
});

describe('the source tree keeps the rule', () => {
  it('sees the whole tree', () => {
    for (const layer of Object.keys(MAY_IMPORT)) expect(FILES.some((f) => layerOf(f) === layer), layer).toBe(true);
  });

  it('no source file imports a layer above its own', () => {
    const broken = FILES.flatMap(edges)
      .filter((e) => e.spec.startsWith('.'))
      .map((e) => {
        const to = normalize(join(dirname(e.from), e.spec)).replace(/\.js$/, '.ts');
        const why = forbidden(e.from, relative('.', to));
        return why && `${e.from}:${e.line} imports ${e.spec}: ${why}`;
      })
      .filter(Boolean);
    expect(broken).toEqual([]);
  });

  it('core/ and contract/ import no package and no Node API', () => {
    const impure = FILES.filter((f) => pureLayer(layerOf(f)))
      .flatMap(edges)
      .filter((e) => !e.spec.startsWith('.'))
      .map((e) => `${e.from}:${e.line} imports ${e.spec}`);
    expect(impure).toEqual([]);
  });
});
