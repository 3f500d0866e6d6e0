import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

export type HttpMethod = 'get' | 'post' | 'patch' | 'put' | 'delete';

export interface DocumentedOperation {
  tags?: string[];
  summary?: string;
  'x-roles'?: string[];
}

/** The parts of the OpenAPI document the API page lists; the full document is rendered at /api/docs. */
export interface OpenApiDocument {
  openapi: string;
  info: { title: string; version: string };
  tags?: { name: string; description?: string }[];
  paths: Record<string, Partial<Record<HttpMethod, DocumentedOperation>>>;
}

export const getOpenApiDocument = () => api.get<OpenApiDocument>('/openapi.json');
export const openApiDocumentQueryOptions = () => queryOptions({ queryKey: ['openapi-document'], queryFn: getOpenApiDocument, staleTime: Infinity });
export const useOpenApiDocument = () => useQuery(openApiDocumentQueryOptions());
