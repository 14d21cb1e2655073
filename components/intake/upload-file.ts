// Browser side of an upload: the SHA-256 the server will check, and a PUT
// straight to S3 with progress (fetch cannot report upload progress; XHR can).

/** Hex SHA-256 of a file, computed with crypto.subtle (the whole file is read into memory once; the limit is 200 MB). */
export async function sha256OfFile(file: Blob): Promise<string> {
  if (!globalThis.crypto?.subtle) throw new Error("This browser cannot compute checksums here (crypto.subtle needs https or localhost).");
  const digest = await crypto.subtle.digest("SHA-256", await file.arrayBuffer());
  return Array.from(new Uint8Array(digest), (b) => b.toString(16).padStart(2, "0")).join("");
}

/**
 * What the upload screen says when the browser's PUT to the file store fails:
 * no answer at all (`"network"`: the store is down or the connection dropped),
 * a 5xx (the store is up but failing), or another refusal.
 */
export function putFailureMessage(outcome: number | "network"): string {
  if (outcome === "network") {
    return "The file store did not answer, so the file was not uploaded (the store may be unavailable, or the connection dropped). Nothing was recorded; try again in a few minutes.";
  }
  if (outcome >= 500) return `The file store is unavailable (HTTP ${outcome}), so the file was not uploaded. Nothing was recorded; try again in a few minutes.`;
  return `The file store refused the file (HTTP ${outcome}). Upload it again; if it keeps happening, tell your manager.`;
}

/** PUTs `file` to a presigned URL, reporting the fraction sent; rejects with a sentence on network errors or a non-2xx answer. */
export function putWithProgress(url: string, file: Blob, contentType: string, onProgress: (fraction: number) => void, signal?: AbortSignal): Promise<void> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open("PUT", url);
    xhr.setRequestHeader("Content-Type", contentType);
    xhr.upload.onprogress = (event) => {
      if (event.lengthComputable && event.total > 0) onProgress(event.loaded / event.total);
    };
    xhr.onload = () => {
      if (xhr.status >= 200 && xhr.status < 300) {
        onProgress(1);
        resolve();
      } else reject(new Error(putFailureMessage(xhr.status)));
    };
    xhr.onerror = () => reject(new Error(putFailureMessage("network")));
    xhr.onabort = () => reject(new Error("The upload was cancelled."));
    signal?.addEventListener("abort", () => xhr.abort());
    xhr.send(file);
  });
}

export function formatBytes(bytes: number): string {
  if (bytes < 1024) return `${bytes} B`;
  if (bytes < 1024 * 1024) return `${(bytes / 1024).toFixed(1)} KB`;
  return `${(bytes / 1024 / 1024).toFixed(1)} MB`;
}
