/** The one small API client: every server call goes through here (and through TanStack Query above it). */
import type { ErrorBody } from './api/types';

type Problem = { code: string; message: string; details?: unknown };

/** An error answer ({"error": {code, message, details?}}, the document's responses/error) with its HTTP status (0: no answer). */
export class ApiError extends Error {
  readonly code: string;
  readonly details?: unknown;
  constructor(
    readonly status: number,
    problem: Problem,
  ) {
    super(problem.message);
    this.code = problem.code;
    this.details = problem.details;
  }

  /** From a failed answer's parsed body; `fallback` is the message when the body names no problem. */
  static fromAnswer(status: number, body: unknown, fallback: string): ApiError {
    const e: Partial<ErrorBody['error']> = (body as Partial<ErrorBody> | undefined)?.error ?? {};
    return new ApiError(status, { code: e.code ?? 'error', message: e.message ?? fallback, details: e.details });
  }
}

type Body = unknown;

async function request<T>(method: string, path: string, body?: Body, init: RequestInit = {}): Promise<T> {
  const isForm = typeof FormData !== 'undefined' && body instanceof FormData;
  const res = await fetch(`/api/v1${path}`, {
    method,
    credentials: 'same-origin',
    headers: body !== undefined && !isForm ? { 'Content-Type': 'application/json' } : undefined,
    body: body === undefined ? undefined : isForm ? (body as FormData) : JSON.stringify(body),
    ...init,
  });
  if (res.status === 204) return undefined as T;
  const text = await res.text();
  const data = text ? JSON.parse(text) : undefined;
  if (!res.ok) throw ApiError.fromAnswer(res.status, data, `${res.status} ${res.statusText}`);
  return data as T;
}

export const api = {
  get: <T>(path: string) => request<T>('GET', path),
  post: <T>(path: string, body?: Body) => request<T>('POST', path, body),
  patch: <T>(path: string, body?: Body) => request<T>('PATCH', path, body),
  delete: <T>(path: string) => request<T>('DELETE', path),
};
