// The guard every handler runs in: a request that arrives already cancelled, or is cancelled
// while it runs, is answered with RequestCancelled; an exception is logged to the client's
// output and answered with the handler's empty result, so one bad request never takes the
// server down. Errors meant for the user (ResponseError, such as a refused rename) pass through.
import { type CancellationToken, type Connection, LSPErrorCodes, ResponseError } from 'vscode-languageserver';

export type Handler<P, R> = (params: P, token: CancellationToken) => R | ResponseError<void> | Promise<R | ResponseError<void>>;

export function cancelled(): ResponseError<void> {
  return new ResponseError(LSPErrorCodes.RequestCancelled, 'the request was cancelled');
}

export function describeError(err: unknown): string {
  return err instanceof Error ? (err.stack ?? err.message) : String(err);
}

export function guarded<P, R>(connection: Connection, name: string, empty: () => R, handler: Handler<P, R>): (params: P, token: CancellationToken) => Promise<R | ResponseError<void>> {
  return async (params, token) => {
    if (token?.isCancellationRequested) return cancelled();
    try {
      const result = await handler(params, token);
      if (token?.isCancellationRequested) return cancelled();
      return result;
    } catch (err) {
      if (err instanceof ResponseError) return err;
      connection.console.error(`phasewright: ${name} failed (please report it): ${describeError(err)}`);
      return empty();
    }
  };
}

/** The same for notifications, which have no answer: log and carry on. */
export function guardedNotification<P>(connection: Connection, name: string, handler: (params: P) => void | Promise<void>): (params: P) => Promise<void> {
  return async (params) => {
    try {
      await handler(params);
    } catch (err) {
      connection.console.error(`phasewright: ${name} failed (please report it): ${describeError(err)}`);
    }
  };
}
