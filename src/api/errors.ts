/** An API failure in the server's error shape, or `offline` when the server could not be reached. */
export class ApiRequestError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: { path: string; message: string; code?: string }[],
  ) {
    super(message);
  }
  /** The message for one form field, when the server named it. */
  field(path: string): string | undefined {
    return this.details?.find((d) => d.path === path)?.message;
  }
}
