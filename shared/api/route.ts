/**
 * One declaration per HTTP route: method, path, who may call it, the request schemas and
 * the answer. The server mounts its handler from it (server/http/mount-route.ts), the
 * OpenAPI document and docs/api.md are generated from it (server/openapi), the access
 * matrix test calls it as every kind of caller, and the client parses answers with the
 * same answer schema. See DEVELOPERS.md "Adding a route".
 */
import type { z } from 'zod';
import type { Access } from './enums.js';

export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

/** A JSON answer, checked against `schema` before it leaves the server. */
export interface JsonAnswer<S extends z.ZodType = z.ZodType> {
  kind: 'json';
  status: number;
  description: string;
  schema: S;
  /** Other success statuses the handler may pick with `withStatus` (e.g. 202 when queued). */
  alsoStatus?: readonly number[];
}

/** An answer without a body (204). */
export interface EmptyAnswer {
  kind: 'empty';
  status: number;
  description: string;
}

/** A non-JSON answer (CSV, PNG, an event stream, a download) the handler writes itself. */
export interface MediaAnswer {
  kind: 'media';
  status: number;
  description: string;
  mediaType: string;
  /** For the document only, e.g. z.string().meta({ format: 'binary' }). */
  schema: z.ZodType;
}

export type Answer = JsonAnswer | EmptyAnswer | MediaAnswer;

export interface RouteDeclaration {
  /** The OpenAPI operationId, unique. */
  id: string;
  method: Method;
  /** Below /api, with {name} path parameters: '/groups/{groupId}/runs/{runId}'. */
  path: string;
  access: Access;
  /** The OpenAPI tag (one per area). */
  tag: string;
  summary: string;
  /** More for the document: rules, limits, what an answer means. */
  notes?: string;
  params?: z.ZodType;
  query?: z.ZodType;
  /** A JSON body; with `upload`, the other multipart fields. */
  body?: z.ZodType;
  /** multipart/form-data with one file (validated by the upload middleware, not by zod). */
  upload?: { field: string; mediaType: string; description: string };
  /** The body is a file itself (e.g. application/gzip), read by the handler. */
  rawBody?: { mediaType: string; description: string };
  /**
   * What the document shows where it differs from what is validated: a union of objects
   * as one parameter object, a document accepted as `unknown` and checked later.
   */
  described?: { params?: z.ZodObject; query?: z.ZodObject; body?: z.ZodType };
  answer: Answer;
  /** Error statuses beyond those the access rule and validation imply. */
  errors?: Record<number, string>;
}

/** Keeps the literal types of a declaration, so handlers get typed input and answers. */
export function declareRoute<const D extends RouteDeclaration>(declaration: D): D {
  return declaration;
}

export const json = <S extends z.ZodType>(status: number, description: string, schema: S, alsoStatus?: readonly number[]): JsonAnswer<S> => ({
  kind: 'json',
  status,
  description,
  schema,
  ...(alsoStatus ? { alsoStatus } : {}),
});

export const empty = (status: number, description: string): EmptyAnswer => ({ kind: 'empty', status, description });

export const media = (status: number, mediaType: string, description: string, schema: z.ZodType): MediaAnswer => ({
  kind: 'media',
  status,
  description,
  mediaType,
  schema,
});

type Parsed<T> = T extends z.ZodType ? z.output<T> : undefined;

/** What a handler of route D receives, parsed by the declared schemas. */
export interface RouteInput<D extends RouteDeclaration> {
  params: D extends { params: infer P } ? Parsed<P> : Record<string, string>;
  query: D extends { query: infer Q } ? Parsed<Q> : undefined;
  body: D extends { body: infer B } ? Parsed<B> : undefined;
}

/** The answer type of a JSON route, as the client receives it (after JSON). */
export type AnswerOf<D extends RouteDeclaration> = D['answer'] extends JsonAnswer<infer S> ? z.output<S> : never;
