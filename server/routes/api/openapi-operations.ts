/** API operations of the import, export and backup routes, listed for the OpenAPI document. */
import type { ApiOperation } from "./openapi.ts";

export const apiOperations: ApiOperation[] = [];
