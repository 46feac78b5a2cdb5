import { HttpError } from '../http/errors';
import { WindowCounter, waitWords } from '../http/throttle';

export interface MailLimitOptions {
  windowMs: number;
  resetPerRecipient: number;
  invitationsPerUser: number;
  invitationsPerRecipient: number;
  now?: () => number;
}

const tooMany = (message: string, retryAfterMs: number) => new HttpError(429, `${message}; try again in ${waitWords(retryAfterMs)}`);

/**
 * How much mail one address receives and one user sends, so the app cannot be used to flood an
 * inbox. Keys are normalised addresses and user ids; counts live in memory (see WindowCounter).
 */
export class MailLimits {
  private readonly resets: WindowCounter;
  private readonly invitesTo: WindowCounter;
  private readonly invitesBy: WindowCounter;

  constructor(private readonly opts: MailLimitOptions) {
    this.resets = new WindowCounter(opts.windowMs, opts.now);
    this.invitesTo = new WindowCounter(opts.windowMs, opts.now);
    this.invitesBy = new WindowCounter(opts.windowMs, opts.now);
  }

  /**
   * Counts a reset request for the address, or throws 429. Called whether or not the address has
   * an account, so the answer tells nothing about which addresses do.
   */
  takeReset(email: string): void {
    if (this.resets.count(email) >= this.opts.resetPerRecipient) {
      throw tooMany('Several reset links were sent to this address in the last hour; use the newest one', this.resets.retryAfterMs(email));
    }
    this.resets.add(email);
  }

  /** throws 429 when the inviter or the invited address has had too many invitations lately */
  checkInvitation(email: string, inviterId: number): void {
    const by = String(inviterId);
    if (this.invitesBy.count(by) >= this.opts.invitationsPerUser) {
      throw tooMany(`You sent ${this.opts.invitationsPerUser} invitations in the last hour`, this.invitesBy.retryAfterMs(by));
    }
    if (this.invitesTo.count(email) >= this.opts.invitationsPerRecipient) {
      throw tooMany(`${email} was invited ${this.opts.invitationsPerRecipient} times in the last hour`, this.invitesTo.retryAfterMs(email));
    }
  }

  /** counts an invitation that was sent */
  countInvitation(email: string, inviterId: number): void {
    this.invitesBy.add(String(inviterId));
    this.invitesTo.add(email);
  }
}
