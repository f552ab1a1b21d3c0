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
      throw new UserError(UNREADABLE, { status: 400 });
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
      throw new UserError(`The file is larger than ${formatBytes(opts.maxBytes)}, the most accepted.`, { status: 413 });
    if (e instanceof MaxFilesExceededError) throw new UserError("Upload one file at a time.", { status: 413 });
    if (e instanceof MaxPartsExceededError || e instanceof MaxTotalSizeExceededError)
      throw new UserError("The upload has more form fields or data than its form sends.", { status: 413 });
    if (e instanceof MaxHeaderSizeExceededError)
      throw new UserError("A part of the upload has oversized headers.", { status: 413 });
    // The parser wraps a malformed body (bad boundary, truncated part) in FormDataParseError.
    if (e instanceof FormDataParseError || e instanceof MultipartParseError)
      throw new UserError(UNREADABLE, { status: 400 });
    throw e;
  }
}

export function formatBytes(n: number): string {
  if (n >= 1024 * 1024) return `${(n / 1024 / 1024).toFixed(n % (1024 * 1024) === 0 ? 0 : 1)} MB`;
  if (n >= 1024) return `${(n / 1024).toFixed(1)} kB`;
  return `${n} bytes`;
}
