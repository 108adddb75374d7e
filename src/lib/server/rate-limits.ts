import { RateLimiterMemory, RateLimiterRes } from 'rate-limiter-flexible';
import { fail } from './errors';

/**
 * In-memory limits per process. With several instances behind a load balancer
 * each instance counts on its own, which still bounds guessing per instance.
 */
const limiters = {
  /** Failed sign-ins per address and client. */
  signInPerAccount: new RateLimiterMemory({ keyPrefix: 'signin-acct', points: 8, duration: 15 * 60 }),
  /** Sign-in attempts per client. */
  signInPerClient: new RateLimiterMemory({ keyPrefix: 'signin-ip', points: 60, duration: 15 * 60 }),
  /** Reset e-mails per address. */
  resetPerAccount: new RateLimiterMemory({ keyPrefix: 'reset-acct', points: 5, duration: 60 * 60 }),
  /** Reset requests and reset submissions per client. */
  resetPerClient: new RateLimiterMemory({ keyPrefix: 'reset-ip', points: 30, duration: 60 * 60 }),
  /** Account creations per client. */
  signUpPerClient: new RateLimiterMemory({ keyPrefix: 'signup-ip', points: 30, duration: 60 * 60 }),
  /** Verification and invitation mails resent per user. */
  mailPerUser: new RateLimiterMemory({ keyPrefix: 'mail-user', points: 30, duration: 60 * 60 }),
};

/** Names of the rate limits. */
export type LimitName = keyof typeof limiters;

/** Spends one point of a limit, or throws 429 with Retry-After when it is used up. */
export async function consumeLimit(name: LimitName, key: string): Promise<void> {
  try {
    await limiters[name].consume(key);
  } catch (error) {
    if (error instanceof RateLimiterRes) throw fail.rateLimited(error.msBeforeNext / 1000);
    throw error;
  }
}

/** Throws 429 if a limit is already used up, without spending a point. */
export async function checkLimit(name: LimitName, key: string): Promise<void> {
  const state = await limiters[name].get(key);
  if (state && state.remainingPoints <= 0) throw fail.rateLimited(state.msBeforeNext / 1000);
}

/** Forgets the count of one key (after a successful sign-in). */
export async function resetLimit(name: LimitName, key: string): Promise<void> {
  await limiters[name].delete(key);
}
