/** Stripe's error types as the SDK maps them (400/404 invalid request, 402 card, 401 auth). */
export type StripeErrorType = 'invalid_request_error' | 'card_error' | 'api_error' | 'idempotency_error'

export interface StripeErrorBody {
  type: StripeErrorType
  message: string
  code?: string
  param?: string
  decline_code?: string
}

/** An error the fake answers with, in Stripe's `{ error: {...} }` shape. */
export class ApiError extends Error {
  constructor(
    public readonly status: number,
    public readonly body: StripeErrorBody,
  ) {
    super(body.message)
  }

  toJSON(): { error: StripeErrorBody } {
    return { error: this.body }
  }
}

export function invalid(message: string, param?: string, code?: string, status = 400): ApiError {
  return new ApiError(status, { type: 'invalid_request_error', message, ...(code && { code }), ...(param && { param }) })
}

export function missingParam(param: string): ApiError {
  return invalid(`Missing required param: ${param}.`, param, 'parameter_missing')
}

export function noSuch(kind: string, id: string, status = 404, param?: string): ApiError {
  return invalid(`No such ${kind}: '${id}'`, param ?? 'id', 'resource_missing', status)
}
