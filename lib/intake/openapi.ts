import { z } from "zod";
import { CODE_PATTERN_SOURCE } from "./codes";
import { FloorSheetSchema, InspectionBatchSchema, TallyBatchSchema } from "./schemas";

/**
 * OpenAPI 3.1 description of /api/v1. Request bodies are the JSON Schema of the very zod
 * schemas the handlers validate with (z.toJSONSchema, draft 2020-12, which OpenAPI 3.1
 * uses), so the document cannot disagree with the code.
 */

export const REQUEST_SCHEMAS = {
  TallyBatch: TallyBatchSchema,
  InspectionBatch: InspectionBatchSchema,
  FloorSheet: FloorSheetSchema,
} as const;

/** A request schema as it appears under components.schemas. */
export function requestJsonSchema(schema: z.ZodType): Record<string, unknown> {
  const { $schema: _drop, ...rest } = z.toJSONSchema(schema, { target: "draft-2020-12", io: "input", unrepresentable: "any" }) as Record<string, unknown>;
  return rest;
}

const ref = (name: string) => ({ $ref: `#/components/schemas/${name}` });
const json = (schema: unknown) => ({ "application/json": { schema } });

const errorResponse = (description: string) => ({ description, content: json(ref("Error")) });

const submissionResponses = {
  "201": { description: "Stored.", content: json(ref("SubmissionResult")) },
  "200": {
    description: "A replay: this key was already used with the same content. The original result, nothing stored again.",
    headers: { "Idempotent-Replayed": { schema: { type: "string", const: "true" } } },
    content: json(ref("SubmissionResult")),
  },
  "400": errorResponse("Invalid request; `problems` lists each row's problems. Nothing stored."),
  "401": errorResponse("No or invalid credentials."),
  "403": errorResponse("Credentials lack the scope tallies:write (or the role for this change)."),
  "409": errorResponse("The idempotency key was already used with different content (code key-reused)."),
  "413": errorResponse("Body larger than 4 MiB."),
};

const keyHeader = {
  name: "Idempotency-Key",
  in: "header",
  required: false,
  description: "Required unless the body has idempotencyKey. The same key on every retry of one batch; 8–128 of [A-Za-z0-9._-].",
  schema: { type: "string", pattern: "^[A-Za-z0-9._-]{8,128}$" },
};

export function openApiDocument(): Record<string, unknown> {
  const components: Record<string, unknown> = {};
  for (const [name, schema] of Object.entries(REQUEST_SCHEMAS)) components[name] = requestJsonSchema(schema);
  components.SubmissionResult = {
    type: "object",
    required: ["submissionId", "idempotencyKey", "kind", "receivedAt", "stored", "tallyEntryIds", "inspectionIds", "totals", "replay"],
    properties: {
      submissionId: { type: "integer" },
      idempotencyKey: { type: "string" },
      kind: { type: "string", enum: ["tallies", "inspections", "floor-sheet", "correction"] },
      receivedAt: { type: "string", format: "date-time" },
      stored: {
        type: "object",
        properties: { tallies: { type: "integer" }, inspections: { type: "integer" }, corrections: { type: "integer" } },
      },
      tallyEntryIds: { type: "array", items: { type: "integer" } },
      inspectionIds: { type: "array", items: { type: "integer" } },
      totals: { type: "object", properties: { defects: { type: "integer" }, units: { type: "integer" } } },
      replay: { type: "boolean" },
    },
  };
  components.Error = {
    type: "object",
    required: ["error", "code"],
    properties: {
      error: { type: "string" },
      code: { type: "string" },
      problems: {
        type: "array",
        items: {
          type: "object",
          properties: { row: { type: ["integer", "null"] }, field: { type: "string" }, message: { type: "string" } },
        },
      },
      messages: { type: "array", items: { type: "string" } },
    },
  };
  components.CellTotal = {
    type: "object",
    required: ["date", "shift", "line", "category", "count"],
    properties: {
      date: { type: "string", format: "date" },
      shift: { type: "string", pattern: CODE_PATTERN_SOURCE },
      line: { type: "string", pattern: CODE_PATTERN_SOURCE },
      category: { type: "string", pattern: CODE_PATTERN_SOURCE },
      count: { type: "integer", minimum: 0 },
    },
  };

  return {
    openapi: "3.1.0",
    info: {
      title: "Linemix intake API",
      version: "1.0.0",
      description:
        "Defect tallies and inspected units from line-side devices and plant systems. Writes are idempotent: " +
        "send the same Idempotency-Key on every retry of one batch. Entries are never changed in place; " +
        "corrections are made in Linemix and supersede the original entry.",
    },
    servers: [{ url: "/" }],
    security: [{ bearer: [] }],
    paths: {
      "/api/v1/tallies": {
        post: {
          summary: "Add defect counts",
          operationId: "postTallies",
          parameters: [keyHeader],
          requestBody: { required: true, content: json(ref("TallyBatch")) },
          responses: submissionResponses,
        },
        get: {
          summary: "Current tallies per date, shift, line and category",
          operationId: "getTallies",
          description: "Scope analysis:read. Sums of current (not superseded) entries.",
          parameters: [
            { name: "from", in: "query", required: true, schema: { type: "string", format: "date" } },
            { name: "to", in: "query", required: true, schema: { type: "string", format: "date" } },
            { name: "line", in: "query", required: false, description: "Line code; repeat or comma-separate for several.", schema: { type: "array", items: { type: "string", pattern: CODE_PATTERN_SOURCE } }, style: "form", explode: true },
            { name: "format", in: "query", required: false, schema: { type: "string", enum: ["json", "csv"] } },
          ],
          responses: {
            "200": {
              description: "Cells in (date, line, shift, category) order.",
              content: {
                "application/json": {
                  schema: {
                    type: "object",
                    properties: {
                      from: { type: "string", format: "date" },
                      to: { type: "string", format: "date" },
                      lines: { type: ["array", "null"], items: { type: "string" } },
                      rows: { type: "array", items: ref("CellTotal") },
                    },
                  },
                },
                "text/csv": { schema: { type: "string" } },
              },
            },
            "400": errorResponse("Invalid query."),
            "401": errorResponse("No or invalid credentials."),
            "403": errorResponse("Credentials lack the scope analysis:read."),
            "422": errorResponse("More than 100,000 cells; narrow the query or use format=csv."),
          },
        },
      },
      "/api/v1/inspections": {
        post: {
          summary: "Add units inspected",
          operationId: "postInspections",
          parameters: [keyHeader],
          requestBody: { required: true, content: json(ref("InspectionBatch")) },
          responses: submissionResponses,
        },
      },
      "/api/v1/imports": {
        post: {
          summary: "Import a CSV file (the import page's upload)",
          operationId: "postImport",
          description:
            "The body is the file itself (tally columns date,shift,line,category,count[,product,note] or units columns date,shift,line,units[,product]). " +
            "All or nothing; problems are listed by file line. dryRun=1 checks only; expect=<sha256> imports only those bytes. Engineers signed in with a password (not API tokens); addMissing needs an admin.",
          parameters: [
            { name: "dryRun", in: "query", required: false, schema: { type: "string", enum: ["1"] } },
            { name: "expect", in: "query", required: false, schema: { type: "string", pattern: "^[0-9a-f]{64}$" } },
            { name: "force", in: "query", required: false, schema: { type: "string", enum: ["1"] } },
            { name: "addMissing", in: "query", required: false, schema: { type: "string", enum: ["1"] } },
            { name: "X-File-Name", in: "header", required: false, schema: { type: "string" } },
          ],
          requestBody: { required: true, content: { "text/csv": { schema: { type: "string" } } } },
          responses: {
            "200": { description: "Checked (dry run): preview, nothing written." },
            "201": { description: "Imported." },
            "422": { description: "Refused: `problems` lists every problem as 'line N: …'. Nothing written." },
            "401": errorResponse("No or invalid credentials."),
            "403": errorResponse("Not an engineer, a badge session, an API token, or addMissing without admin."),
            "413": errorResponse("File larger than 200 MiB."),
          },
        },
      },
      "/api/v1/floor-sheets": {
        post: {
          summary: "One floor sheet (used by the floor entry page)",
          operationId: "postFloorSheet",
          parameters: [keyHeader],
          requestBody: { required: true, content: json(ref("FloorSheet")) },
          responses: {
            ...submissionResponses,
            "409": errorResponse("Key reused with different content (key-reused), or the sheet changed since it was opened (sheet-changed)."),
          },
        },
      },
    },
    components: {
      schemas: components,
      securitySchemes: {
        bearer: { type: "http", scheme: "bearer", description: "An API token (lmx_…) created by an admin, or a browser session." },
      },
    },
  };
}
