/** Turns an expected rejection into the ApiError the server would answer with. */
import { toApiError, type ApiError } from '../../../../src/lib/server/errors';

/** The ApiError a promise rejects with (through toApiError); throws when it resolves. */
export async function catchRejection(p: Promise<unknown>): Promise<ApiError> {
  try {
    await p;
  } catch (e) {
    return toApiError(e);
  }
  throw new Error('expected a rejection');
}
