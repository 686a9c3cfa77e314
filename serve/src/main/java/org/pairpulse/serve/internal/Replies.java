package org.pairpulse.serve.internal;

import io.javalin.http.Context;
import org.pairpulse.serve.wire.Json;

/** Writing a 200 JSON answer. */
final class Replies {
  private Replies() {}

  static final String JSON = "application/json";

  static void json(Context ctx, byte[] body) {
    ctx.status(200).contentType(JSON).result(body);
  }

  static void json(Context ctx, Object body) {
    json(ctx, Json.bytes(body));
  }
}
