// What answer-types-once.test.ts checks, as functions over source text, so the test can
// also show each check failing on a made-up file.
import ts from 'typescript';
import type { z } from 'zod';
import type { RouteDeclaration } from '../../shared/api/route';

/** A declared interface or object type: its name, where, and its top-level property names. */
interface DeclaredShape {
  file: string;
  line: number;
  name: string;
  keys: string[];
}

/** Every `interface X` and `type X =` in a file, with the property names of an object type. */
export function declaredShapes(file: string, text: string): DeclaredShape[] {
  const source = ts.createSourceFile(file, text, ts.ScriptTarget.Latest, true);
  const out: DeclaredShape[] = [];
  const line = (node: ts.Node) => source.getLineAndCharacterOfPosition(node.getStart(source)).line + 1;
  const keysOf = (members: ts.NodeArray<ts.TypeElement>) =>
    members.filter(ts.isPropertySignature).map((m) => m.name.getText(source).replace(/^['"]|['"]$/g, ''));
  const visit = (node: ts.Node) => {
    if (ts.isInterfaceDeclaration(node)) {
      // An interface that extends another inherits its keys: count it as the union of what it writes.
      out.push({ file, line: line(node), name: node.name.text, keys: keysOf(node.members) });
    } else if (ts.isTypeAliasDeclaration(node)) {
      const keys = ts.isTypeLiteralNode(node.type) ? keysOf(node.type.members) : [];
      out.push({ file, line: line(node), name: node.name.text, keys });
    }
    ts.forEachChild(node, visit);
  };
  visit(source);
  return out;
}

/** The object schemas inside a schema (itself included), through arrays, nullables, unions, records, pipes. */
export function objectSchemasIn(schema: z.ZodType, found = new Set<z.ZodType>(), seen = new Set<unknown>()): Set<z.ZodType> {
  if (seen.has(schema)) return found;
  seen.add(schema);
  const def = (schema as unknown as { _zod: { def: Record<string, unknown> } })._zod.def;
  const children: unknown[] = [];
  switch (def['type']) {
    case 'object':
      found.add(schema);
      children.push(...Object.values(def['shape'] as Record<string, unknown>));
      break;
    case 'array':
      children.push(def['element']);
      break;
    case 'nullable':
    case 'optional':
    case 'default':
    case 'prefault':
    case 'readonly':
    case 'nonoptional':
    case 'catch':
      children.push(def['innerType']);
      break;
    case 'union':
      children.push(...(def['options'] as unknown[]));
      break;
    case 'intersection':
      children.push(def['left'], def['right']);
      break;
    case 'record':
      children.push(def['valueType']);
      break;
    case 'pipe':
      children.push(def['in'], def['out']);
      break;
    case 'lazy':
      // A recursive schema (the model's shape tree) makes new objects on each call: look inside once.
      if (!seen.has(def['getter'])) {
        seen.add(def['getter']);
        children.push((def['getter'] as () => unknown)());
      }
      break;
  }
  for (const child of children) if (child && typeof child === 'object' && '_zod' in child) objectSchemasIn(child as z.ZodType, found, seen);
  return found;
}

/** The keys of an object schema. */
function schemaKeys(schema: z.ZodType): string[] {
  const def = (schema as unknown as { _zod: { def: { shape: Record<string, unknown> } } })._zod.def;
  return Object.keys(def.shape);
}

/**
 * The answer types shared/api names: `export type X = z.infer<typeof xSchema>` where xSchema
 * is, or lies inside, the answer schema of a declared route. `exports` maps each shared/api
 * export name to its value.
 */
export function answerTypeNames(sharedApiTexts: string[], exports: Map<string, unknown>, answerObjects: Set<z.ZodType>): Set<string> {
  const names = new Set<string>();
  for (const text of sharedApiTexts) {
    for (const m of text.matchAll(/export type (\w+) = z\.(?:infer|output)<typeof (\w+)>/g)) {
      const schema = exports.get(m[2]);
      if (!schema || typeof schema !== 'object') continue;
      // The schema itself, or an array/nullable of it, is part of an answer.
      const inside = objectSchemasIn(schema as z.ZodType);
      if ([...inside].some((s) => answerObjects.has(s)) || answerObjects.has(schema as z.ZodType)) names.add(m[1]);
    }
  }
  return names;
}

/** Declarations that restate an answer type: the same name, or the same keys as an answer object (4 keys or more). */
export function restatedAnswers(declared: DeclaredShape[], names: Set<string>, answerObjects: Set<z.ZodType>): string[] {
  const shapes = new Map<string, string>();
  for (const s of answerObjects) {
    const keys = schemaKeys(s).sort();
    if (keys.length >= 4) shapes.set(keys.join(','), keys.join(', '));
  }
  const out: string[] = [];
  for (const d of declared) {
    if (names.has(d.name)) out.push(`${d.file}:${d.line} declares ${d.name}, an answer type of shared/api`);
    else if (d.keys.length >= 4 && shapes.has([...d.keys].sort().join(',')))
      out.push(`${d.file}:${d.line} declares ${d.name} with the keys of an answer schema (${shapes.get([...d.keys].sort().join(','))})`);
  }
  return out;
}

const HTTP_METHODS = new Set(['get', 'post', 'put', 'patch', 'delete']);

/**
 * HTTP calls of a client `*-api.ts` that do not go through the shared parsing helper: each
 * `http.<method>(…)` must be followed by `.pipe(parseAnswer(xRoute…)` or `.pipe(emptyAnswer(xRoute))`,
 * carry no type argument (an unchecked cast), and name a declared route of the same method.
 */
export function unparsedCalls(file: string, text: string, routes: Map<string, RouteDeclaration>): string[] {
  const source = ts.createSourceFile(file, text, ts.ScriptTarget.Latest, true);
  const out: string[] = [];
  const where = (node: ts.Node) => `${file}:${source.getLineAndCharacterOfPosition(node.getStart(source)).line + 1}`;
  const visit = (node: ts.Node) => {
    if (
      ts.isCallExpression(node) &&
      ts.isPropertyAccessExpression(node.expression) &&
      HTTP_METHODS.has(node.expression.name.text) &&
      /\bhttp$/i.test(node.expression.expression.getText(source))
    ) {
      const method = node.expression.name.text;
      const pipe = node.parent;
      const pipeCall = pipe?.parent;
      const first =
        ts.isPropertyAccessExpression(pipe) && pipe.name.text === 'pipe' && pipeCall && ts.isCallExpression(pipeCall) && pipeCall.expression === pipe
          ? pipeCall.arguments[0]
          : undefined;
      const helper = first && ts.isCallExpression(first) && ts.isIdentifier(first.expression) ? first.expression.text : null;
      if (node.typeArguments?.length) out.push(`${where(node)}: http.${method}<…> casts the answer instead of parsing it`);
      if (helper !== 'parseAnswer' && helper !== 'emptyAnswer') {
        out.push(`${where(node)}: http.${method}(…) is not piped through parseAnswer or emptyAnswer`);
      } else {
        const arg = (first as ts.CallExpression).arguments[0];
        const route = arg && ts.isIdentifier(arg) ? routes.get(arg.text) : undefined;
        if (!route) out.push(`${where(node)}: ${helper}(…) does not name a route declared in shared/api`);
        else if (route.method !== method) out.push(`${where(node)}: http.${method} parsed as ${route.id}, a ${route.method.toUpperCase()} route`);
        else if (helper === 'parseAnswer' && route.answer.kind !== 'json') out.push(`${where(node)}: ${route.id} has no JSON answer to parse`);
        else if (helper === 'emptyAnswer' && route.answer.kind !== 'empty') out.push(`${where(node)}: ${route.id} answers with a body; parse it`);
      }
    }
    ts.forEachChild(node, visit);
  };
  visit(source);
  return out;
}
