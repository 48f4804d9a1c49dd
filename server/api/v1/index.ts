// REST API v1: every endpoint, in the reference's order. A new endpoint is defined in a module
// here (schema → handler), listed below, and served by a resource route in app/routes.ts
// (DEVELOPERS.md, "A new API endpoint"); the OpenAPI document picks it up from this list.
import { endpointTable, type ApiEndpoint } from "../endpoint.server.ts";
import { openApiDocument, type OpenApiDocument } from "../openapi.ts";
import { exposureEndpoint, findingsEndpoint, fleetReachEndpoint, reachEndpoint, traceEndpoint } from "./analysis.ts";
import { createDeviceEndpoint, getDeviceEndpoint, listDevicesEndpoint } from "./devices.ts";
import { getFieldCheckEndpoint, listFieldChecksEndpoint, recordFieldCheckEndpoint } from "./field-checks.ts";
import { createProposalEndpoint, proposalEffectEndpoint, submitProposalEndpoint } from "./proposals.ts";
import { exportRevisionEndpoint, getRevisionEndpoint, listRevisionsEndpoint } from "./revisions.ts";
import { ModelDocumentSchema } from "./schemas.ts";
import { tokenEndpoint } from "./token.ts";

export const API_V1_ENDPOINTS: readonly ApiEndpoint[] = [
  tokenEndpoint,
  listDevicesEndpoint,
  createDeviceEndpoint,
  getDeviceEndpoint,
  listRevisionsEndpoint,
  getRevisionEndpoint,
  exportRevisionEndpoint,
  traceEndpoint,
  reachEndpoint,
  exposureEndpoint,
  findingsEndpoint,
  fleetReachEndpoint,
  recordFieldCheckEndpoint,
  listFieldChecksEndpoint,
  getFieldCheckEndpoint,
  createProposalEndpoint,
  proposalEffectEndpoint,
  submitProposalEndpoint,
];

/** The endpoints by path, for the resource routes. */
export const API_V1 = endpointTable(API_V1_ENDPOINTS);

let document: OpenApiDocument | undefined;

/** The OpenAPI document of v1, generated once per process. */
export function apiV1Document(): OpenApiDocument {
  document ??= openApiDocument(API_V1_ENDPOINTS, [ModelDocumentSchema], {
    version: "1",
    description:
      "The Sallyport REST API: devices, revisions, trace, reach (per device and across the fleet), the exposure map, findings, field checks and proposals of one organisation, with a bearer token. Errors are problem details (RFC 9457); lists are paged by cursor; each token has a rate limit per minute.",
  });
  return document;
}
