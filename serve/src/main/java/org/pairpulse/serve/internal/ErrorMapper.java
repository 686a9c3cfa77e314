package org.pairpulse.serve.internal;

import io.javalin.config.JavalinConfig;
import io.javalin.http.Context;
import io.javalin.http.HttpResponseException;
import java.util.LinkedHashMap;
import java.util.Locale;
import java.util.Map;
import org.eclipse.jetty.http.HttpStatus;
import org.pairpulse.serve.metrics.ServeMeters;
import org.pairpulse.serve.wire.Json;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The one place where failures become answers: every error, whether thrown by a binder ({@link ApiException}),
 * by Javalin (404, 405, 413), by a bug (500, logged) or by Jetty before routing ({@link JsonErrorHandler}), is
 * written as {@code {"error": reason, "status": code}} with that status, and counted by status.
 */
final class ErrorMapper {
  private static final Logger LOG = LoggerFactory.getLogger(ErrorMapper.class);

  private final ServeMeters meters;

  ErrorMapper(ServeMeters meters) {
    this.meters = meters;
  }

  void install(JavalinConfig config) {
    config.routes.exception(ApiException.class, (e, ctx) -> write(ctx, e.status(), e.getMessage()));
    config.routes.exception(HttpResponseException.class, (e, ctx) -> write(ctx, e.getStatus(), reason(e)));
    config.routes.exception(Exception.class, (e, ctx) -> {
      LOG.error("request {} {} failed", ctx.method(), ctx.path(), e);
      write(ctx, 500, "internal error");
    });
  }

  private void write(Context ctx, int status, String reason) {
    meters.error(status);
    ctx.status(status).contentType(Replies.JSON).result(body(status, reason));
  }

  /** The error body; a blank reason becomes the status's own reason phrase. */
  static byte[] body(int status, String reason) {
    Map<String, Object> error = new LinkedHashMap<>();
    error.put("error", reason == null || reason.isBlank() ? defaultReason(status) : reason);
    error.put("status", status);
    return Json.bytes(error);
  }

  private static String defaultReason(int status) {
    String reason = HttpStatus.getMessage(status);
    return reason == null ? "error" : reason.toLowerCase(Locale.ROOT);
  }

  private static String reason(HttpResponseException e) {
    return switch (e.getStatus()) {
      case 404 -> "no such endpoint";
      case 405 -> "method not allowed";
      case 413 -> "request body too large";
      default -> {
        String message = e.getMessage();
        yield message == null || message.isBlank() ? "error" : Params.shorten(message).toLowerCase(Locale.ROOT);
      }
    };
  }
}
