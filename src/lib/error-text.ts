import { ApiError } from './api';

/**
 * Words a user can act on for a failed request. The server's own message is kept where it
 * explains the specific conflict; generic statuses get guidance on what to do next.
 */
export function errorText(error: unknown): string {
  if (!(error instanceof ApiError)) {
    return error instanceof Error ? error.message : 'Something went wrong. Try again.';
  }
  switch (error.status) {
    case 0:
      return error.message;
    case 400:
      return Object.keys(error.fields).length > 0 ? 'Check the highlighted fields.' : error.message;
    case 401:
      // the server says which: wrong password, or no longer signed in
      return error.message || 'Your session has ended. Sign in again to continue.';
    case 403:
      return `${error.message} Ask the rig's owner if you need this.`;
    case 404:
      return `${error.message} It may have been deleted — reload the page to see the current state.`;
    case 409:
    case 410:
      return error.message;
    case 429:
      return error.message || 'Too many attempts in a short time. Wait a while, then try again.';
    default:
      return error.status >= 500
        ? 'The server ran into a problem. Try again in a moment.'
        : error.message;
  }
}
