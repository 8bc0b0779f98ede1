import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { API_BASE_PATH, listOperations, openApiDocument } from '@/lib/api/openapi';
import { TEAM_ACTIONS } from '@/lib/auth/permissions';
import { PROJECT_ROOT } from '../support/server';

/**
 * Keeps the OpenAPI document (lib/api/openapi.ts) in step with the route handlers: every exported handler under
 * app/api/v1 must be documented with the same path and method, and nothing may be documented that no handler
 * serves. Also checks the document's internal consistency (ids, path parameters, $refs, permissions).
 */
const API_DIR = path.join(PROJECT_ROOT, 'app', 'api', 'v1');
const METHOD_EXPORT = /export\s+(?:async\s+)?function\s+(GET|POST|PUT|PATCH|DELETE)\b|export\s+const\s+(GET|POST|PUT|PATCH|DELETE)\b/g;

type RouteFile = { file: string; path: string; methods: string[]; source: string };

function routeFiles(dir: string, segments: string[] = []): RouteFile[] {
  const out: RouteFile[] = [];
  for (const entry of readdirSync(dir).sort()) {
    const full = path.join(dir, entry);
    if (statSync(full).isDirectory()) {
      // (group) folders add no URL segment; [param] and [...param] become {param}
      const seg = /^\(.*\)$/.test(entry) ? null : entry.replace(/^\[(?:\.\.\.)?(.+)\]$/, '{$1}');
      out.push(...routeFiles(full, seg === null ? segments : [...segments, seg]));
    } else if (/^route\.(ts|tsx|js)$/.test(entry)) {
      const source = readFileSync(full, 'utf8');
      const methods = [...source.matchAll(METHOD_EXPORT)].map((m) => (m[1] ?? m[2] ?? '').toLowerCase()).sort();
      out.push({ file: path.relative(PROJECT_ROOT, full), path: `/${segments.join('/')}`, methods, source });
    }
  }
  return out;
}

const routes = routeFiles(API_DIR);
const key = (method: string, p: string) => `${method.toUpperCase()} ${p}`;

describe('OpenAPI document ↔ app/api/v1 route handlers', () => {
  it('finds the route files (the walk itself works)', () => {
    // the account, project and document routes exist from the start; more arrive with uploads and analyses
    const paths = routes.map((r) => r.path);
    expect(paths).toContain('/me');
    expect(paths).toContain('/projects');
    expect(paths).toContain('/projects/{projectId}');
    expect(paths).toContain('/openapi.json');
    for (const r of routes) expect(r.methods.length, `${r.file} exports no HTTP handler`).toBeGreaterThan(0);
  });

  it('documents every handler that exists', () => {
    const documented = new Set(listOperations().map((o) => key(o.method, o.path)));
    const missing = routes.flatMap((r) => r.methods.map((m) => key(m, r.path))).filter((k) => !documented.has(k));
    expect(missing, 'handlers missing from lib/api/openapi (add them to paths-core.ts or paths-pipeline.ts)').toEqual([]);
  });

  it('documents nothing that no handler serves', () => {
    const served = new Set(routes.flatMap((r) => r.methods.map((m) => key(m, r.path))));
    const stale = listOperations()
      .map((o) => key(o.method, o.path))
      .filter((k) => !served.has(k));
    expect(stale, 'documented operations without a handler').toEqual([]);
  });

  it('marks token access exactly on the handlers that authenticate through request-access', () => {
    for (const r of routes) {
      // request-access is the one token-aware authentication; lib/jobs/access wraps it for analysis/layout ids and
      // lib/models/version-table-route for a version's derived tables
      const usesTokens = /from '@\/lib\/(auth\/request-access|jobs\/access|models\/version-table-route)'/.test(r.source);
      for (const m of r.methods) {
        const op = openApiDocument.paths[r.path]?.[m as 'get'];
        if (!op) continue; // reported by the test above
        if (usesTokens) expect(op['x-access'], `${key(m, r.path)} accepts tokens (${r.file})`).not.toBe('session');
        else expect(op['x-access'], `${key(m, r.path)} does not accept tokens (${r.file})`).not.toBe('session-or-token');
      }
    }
  });

  it('is mounted at /api/v1', () => {
    expect(openApiDocument.servers[0]?.url).toBe(API_BASE_PATH);
    expect(openApiDocument.openapi).toBe('3.1.0');
  });
});

describe('OpenAPI document consistency', () => {
  const ops = listOperations();

  it('has unique operation ids', () => {
    const ids = ops.map((o) => o.operation.operationId);
    expect(ids.length).toBe(new Set(ids).size);
  });

  it('declares exactly the path parameters each path template names', () => {
    for (const { method, path: p, operation } of ops) {
      const inTemplate = [...p.matchAll(/\{([^}]+)\}/g)].map((m) => m[1]).sort();
      const declared = (operation.parameters ?? []).filter((x) => x.in === 'path').map((x) => x.name).sort();
      expect(declared, key(method, p)).toEqual(inTemplate);
    }
  });

  it('gives every operation a success response and the error body for failures', () => {
    for (const { method, path: p, operation } of ops) {
      const statuses = Object.keys(operation.responses);
      expect(statuses.some((s) => /^2\d\d$/.test(s)), key(method, p)).toBe(true);
      expect(statuses, key(method, p)).toContain('default');
      if (operation['x-access'] !== 'public') expect(statuses, `${key(method, p)} needs 401`).toContain('401');
      if (method !== 'get') expect(statuses, `${key(method, p)} needs 403 (cross-site)`).toContain('403');
    }
  });

  it('names only permissions that exist in lib/auth/permissions.ts', () => {
    const known = new Set<string>([...TEAM_ACTIONS, 'team.read', 'project.read']);
    for (const { method, path: p, operation } of ops) {
      if (operation['x-permission'] !== undefined) expect(known.has(operation['x-permission']), key(method, p)).toBe(true);
    }
  });

  it('resolves every $ref', () => {
    const json = JSON.stringify(openApiDocument);
    const refs = [...json.matchAll(/"\$ref":"#\/components\/(schemas|responses)\/([^"]+)"/g)];
    expect(refs.length).toBeGreaterThan(10);
    for (const [, group, name] of refs) {
      const table = openApiDocument.components[group as 'schemas' | 'responses'] as Record<string, unknown>;
      expect(table[name ?? ''], `#/components/${group}/${name}`).toBeDefined();
    }
    // any other $ref (e.g. zod's local #/$defs) must not point outside the document
    for (const m of json.matchAll(/"\$ref":"([^"]+)"/g)) expect(m[1]).toMatch(/^#\//);
  });

  it('is plain JSON (survives a round trip unchanged)', () => {
    expect(JSON.parse(JSON.stringify(openApiDocument))).toEqual(openApiDocument);
  });

  it('describes request bodies with the handlers\' own zod rules (POST /projects)', () => {
    const body = openApiDocument.paths['/projects']?.post?.requestBody?.content['application/json']?.schema as {
      required: string[];
      properties: Record<string, { minLength?: number; maxLength?: number }>;
    };
    expect(body.required.sort()).toEqual(['name', 'teamId']);
    expect(body.properties.name).toMatchObject({ minLength: 2, maxLength: 80 });
    expect(body.properties.description).toMatchObject({ maxLength: 500 });
  });
});
