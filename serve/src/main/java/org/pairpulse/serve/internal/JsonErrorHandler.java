package org.pairpulse.serve.internal;

import java.nio.ByteBuffer;
import java.nio.charset.StandardCharsets;
import org.eclipse.jetty.http.HttpHeader;
import org.eclipse.jetty.server.Request;
import org.eclipse.jetty.server.Response;
import org.eclipse.jetty.server.handler.ErrorHandler;
import org.eclipse.jetty.util.Callback;

/**
 * Jetty's own errors (malformed requests, bad URIs, oversized headers) in serve's JSON shape
 * {@code {"error": reason, "status": code}} ({@link ErrorMapper#body}), never an HTML page or a stack trace.
 */
final class JsonErrorHandler extends ErrorHandler {
  JsonErrorHandler() {
    setShowStacks(false);
    setShowCauses(false);
  }

  @Override
  protected void generateResponse(Request request, Response response, int code, String message, Throwable cause,
      Callback callback) {
    response.getHeaders().put(HttpHeader.CONTENT_TYPE, "application/json");
    response.write(true, ByteBuffer.wrap(ErrorMapper.body(code, message == null ? null : safe(message))), callback);
  }

  /** Jetty's reasons are short and fixed; cut anything long and drop control characters. */
  private static String safe(String message) {
    String clean = message.replaceAll("\\p{Cntrl}", " ");
    byte[] bytes = clean.getBytes(StandardCharsets.UTF_8);
    return bytes.length <= 200 ? clean : clean.substring(0, 200);
  }
}
