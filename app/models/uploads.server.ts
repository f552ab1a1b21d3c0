import {
  FormDataParseError,
  MaxFileSizeExceededError,
  MaxFilesExceededError,
  MaxHeaderSizeExceededError,
  MaxPartsExceededError,
  MaxTotalSizeExceededError,
  MultipartParseError,
  parseFormData,
} from "@remix-run/form-data-parser";
import { UserError } from "~/errors";

// Multipart uploads (@remix-run/form-data-parser) with a size cap: the file is read into memory only
// up to `maxBytes`; a larger file is refused with a message naming the limit.
/** A UserError (413 too large, 400 unreadable); routes not yet on formAction still tell it apart by name. */
export class UploadError extends UserError {
  constructor(message: string, status = 413) {
    super(message, { status });
  }
}

const UNREADABLE =
  "The upload could not be read: the form body is malformed (send it as multipart/form-data from the upload form).";

export interface UploadedFile {
  name: string;
  bytes: Uint8Array;
  size: number;
}

export async function readMultipart(
  request: Request,
  opts: { fileField: string; maxBytes: number },
): Promise<{ form: FormData; file: UploadedFile | null }> {
  const contentType = request.headers.get("Content-Type") ?? "";
  if (!contentType.startsWith("multipart/form-data")) {
    try {
      return { form: await request.formData(), file: null };
    } catch {
      throw new UploadError(UNREADABLE, 400);
    }
  }
  let file: UploadedFile | null = null;
  try {
    const form = await parseFormData(request, { maxFileSize: opts.maxBytes, maxFiles: 1 }, async (upload) => {
      if (upload.fieldName !== opts.fileField) return null;
      const bytes = new Uint8Array(await upload.arrayBuffer());
      if (bytes.byteLength > 0 || upload.name) file = { name: upload.name || "upload", bytes, size: bytes.byteLength };
      return null;
    });
    return { form, file };
  } catch (e) {
    if (e instanceof MaxFileSizeExceededError)
      throw new UploadError(`The file is larger than ${formatBytes(opts.maxBytes)}, the most accepted.`);
    if (e instanceof MaxFilesExceededError) throw new UploadError("Upload one file at a time.");
    if (e instanceof MaxPartsExceededError || e instanceof MaxTotalSizeExceededError)
      throw new UploadError("The upload has more form fields or data than its form sends.");
    if (e instanceof MaxHeaderSizeExceededError) throw new UploadError("A part of the upload has oversized headers.");
    // The parser wraps a malformed body (bad boundary, truncated part) in FormDataParseError.
    if (e instanceof FormDataParseError || e instanceof MultipartParseError) throw new UploadError(UNREADABLE, 400);
    throw e;
  }
}

export function formatBytes(n: number): string {
  if (n >= 1024 * 1024) return `${(n / 1024 / 1024).toFixed(n % (1024 * 1024) === 0 ? 0 : 1)} MB`;
  if (n >= 1024) return `${(n / 1024).toFixed(1)} kB`;
  return `${n} bytes`;
}
