package org.pairpulse.serve.internal;

/** An error answer: its HTTP status and a reason for the caller. Carries no stack trace. */
public final class ApiException extends RuntimeException {
  private static final long serialVersionUID = 1L;

  private final int status;

  public ApiException(int status, String reason) {
    super(reason, null, false, false);
    this.status = status;
  }

  public static ApiException badRequest(String reason) {
    return new ApiException(400, reason);
  }

  public static ApiException notFound(String reason) {
    return new ApiException(404, reason);
  }

  public int status() {
    return status;
  }
}
