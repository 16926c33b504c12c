import type { ApiErrorBody, ApiIssue } from "../../shared/api/errors";

/** An API refusal with the server's stable error shape: code, message and (for bad input) issues. */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly issues: ApiIssue[] = [],
  ) {
    super(message);
  }
}

async function request<T>(method: string, path: string, body?: unknown): Promise<T> {
  let response: Response;
  try {
    response = await fetch(`/api${path}`, {
      method,
      credentials: "same-origin",
      headers: body === undefined ? {} : { "content-type": "application/json" },
      body: body === undefined ? undefined : JSON.stringify(body),
    });
  } catch {
    throw new ApiError(0, "unavailable", "The Panelproof server cannot be reached. Is it running?");
  }
  if (response.status === 204) return undefined as T;
  const text = await response.text();
  const data = text ? JSON.parse(text) : undefined;
  if (!response.ok) {
    const error = (data as ApiErrorBody | undefined)?.error;
    throw new ApiError(response.status, error?.code ?? "internal", error?.message ?? response.statusText, error?.issues);
  }
  return data as T;
}

export const api = {
  get: <T>(path: string) => request<T>("GET", path),
  post: <T>(path: string, body?: unknown) => request<T>("POST", path, body ?? {}),
  patch: <T>(path: string, body: unknown) => request<T>("PATCH", path, body),
  put: <T>(path: string, body: unknown) => request<T>("PUT", path, body),
  delete: <T = void>(path: string) => request<T>("DELETE", path),
};

/**
 * Sends raw bytes with XMLHttpRequest, because fetch cannot report upload progress. Resolves
 * with the JSON answer; refusals become the same ApiError as `api` throws.
 */
export function uploadBytes<T>(
  path: string,
  body: Blob,
  onProgress: (sent: number, total: number) => void,
  signal?: AbortSignal,
): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open("POST", `/api${path}`);
    xhr.withCredentials = true;
    xhr.setRequestHeader("content-type", "application/octet-stream");
    xhr.upload.onprogress = (e) => onProgress(e.loaded, e.lengthComputable ? e.total : body.size);
    xhr.onerror = () => reject(new ApiError(0, "unavailable", "The upload did not reach the Panelproof server. Is it running?"));
    xhr.onabort = () => reject(new ApiError(0, "aborted", "The upload was stopped."));
    xhr.onload = () => {
      let data: unknown;
      try {
        data = xhr.responseText ? JSON.parse(xhr.responseText) : undefined;
      } catch {
        data = undefined;
      }
      if (xhr.status >= 200 && xhr.status < 300) return resolve(data as T);
      const error = (data as ApiErrorBody | undefined)?.error;
      reject(new ApiError(xhr.status, error?.code ?? "internal", error?.message ?? (xhr.statusText || `HTTP ${xhr.status}`), error?.issues));
    };
    signal?.addEventListener("abort", () => xhr.abort());
    xhr.send(body);
  });
}
