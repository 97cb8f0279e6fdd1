/**
 * The multipart plugin's "keyValues" body keeps an uploaded file's bytes but drops its name,
 * which the import records with the batch. This route hook passes every part through untouched
 * and notes the file names on the request on the way.
 */
import type { FastifyRequest } from "fastify";

const fileNames = new WeakMap<FastifyRequest, Record<string, string>>();

/** onRequest hook for a route receiving an upload: remembers each file part's name. */
export async function noteUploadFileNames(request: FastifyRequest): Promise<void> {
  const names: Record<string, string> = {};
  fileNames.set(request, names);
  const original = request.parts;
  request.parts = function partsNotingNames(this: FastifyRequest, ...args: Parameters<FastifyRequest["parts"]>) {
    const parts = original.apply(this, args);
    return (async function* () {
      for await (const part of parts) {
        if (part.type === "file") names[part.fieldname] = part.filename;
        yield part;
      }
    })();
  } as FastifyRequest["parts"];
}

/** The client's name for the file sent in `field`, without any folder part ("" when none was sent). */
export function uploadFileName(request: FastifyRequest, field: string): string {
  const name = fileNames.get(request)?.[field] ?? "";
  return name.split(/[\\/]/).pop()!.slice(0, 200);
}
