package org.pairpulse.serve.internal;

/** An error answer: its HTTP status and a reason for the caller. Carries no stack trace. */
final class ApiException extends RuntimeException {
  private static final long serialVersionUID = 1L;

  private final int status;

  ApiException(int status, String reason) {
    super(reason, null, false, false);
    this.status = status;
  }

  static ApiException badRequest(String reason) {
    return new ApiException(400, reason);
  }

  static ApiException notFound(String reason) {
    return new ApiException(404, reason);
  }

  int status() {
    return status;
  }
}
