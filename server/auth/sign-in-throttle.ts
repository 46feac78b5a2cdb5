import { WindowCounter } from '../http/throttle';

export interface SignInThrottleOptions {
  /** wrong passwords per account and client address before that pair is refused for the window */
  perPair: number;
  /** wrong passwords from one client address over all accounts before the address is refused */
  perAddress: number;
  /** wrong passwords for one account (from anywhere) before its attempts are slowed down */
  backoffAfter: number;
  /** first back-off delay; it doubles with each further wrong password */
  backoffBaseMs: number;
  /** the back-off never delays an attempt longer than this */
  backoffMaxMs: number;
  windowMs: number;
  now?: () => number;
}

export type Admission = { refused: true; retryAfterMs: number } | { refused: false; delayMs: number };

/**
 * Sign-in rate limiting that counts only wrong passwords, after they were checked (so
 * simultaneous correct sign-ins never trip it, and refusals never count). Two levels:
 *  - a client address that keeps guessing one account (or many) is refused for a while;
 *  - an account guessed at from many addresses is only slowed down: each attempt waits a
 *    short, growing delay, so the owner's correct password still gets through.
 * Written here rather than with express-rate-limit, which counts a request before its outcome
 * is known and cannot key a limit on the verified result.
 */
export class SignInThrottle {
  private readonly pairs: WindowCounter;
  private readonly addresses: WindowCounter;
  private readonly accounts: WindowCounter;

  constructor(private readonly opts: SignInThrottleOptions) {
    this.pairs = new WindowCounter(opts.windowMs, opts.now);
    this.addresses = new WindowCounter(opts.windowMs, opts.now);
    this.accounts = new WindowCounter(opts.windowMs, opts.now);
  }

  admit(email: string, address: string): Admission {
    const pair = pairKey(email, address);
    if (this.pairs.count(pair) >= this.opts.perPair) return { refused: true, retryAfterMs: this.pairs.retryAfterMs(pair) };
    if (this.addresses.count(address) >= this.opts.perAddress) return { refused: true, retryAfterMs: this.addresses.retryAfterMs(address) };
    return { refused: false, delayMs: this.backoffMs(email) };
  }

  /** the per-account delay for the wrong passwords counted so far */
  backoffMs(email: string): number {
    const over = this.accounts.count(email) - this.opts.backoffAfter;
    if (over < 0) return 0;
    return Math.min(this.opts.backoffMaxMs, this.opts.backoffBaseMs * 2 ** Math.min(over, 30));
  }

  failed(email: string, address: string): void {
    this.pairs.add(pairKey(email, address));
    this.addresses.add(address);
    this.accounts.add(email);
  }

  /** a correct password from this address forgives this address's earlier typos for the account */
  succeeded(email: string, address: string): void {
    this.pairs.clear(pairKey(email, address));
  }
}

const pairKey = (email: string, address: string) => `${email}\n${address}`;
