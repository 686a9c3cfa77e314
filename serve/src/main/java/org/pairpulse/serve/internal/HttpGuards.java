package org.pairpulse.serve.internal;

import io.javalin.http.Context;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.util.LinkedHashSet;
import java.util.Optional;
import java.util.Set;

/**
 * What runs before every route: security headers, cache policy, CORS for the configured origins (answering
 * preflights) and the bearer token.
 */
final class HttpGuards {
  private static final String DASHBOARD_CSP = "default-src 'self'; script-src 'self'; style-src 'self'; "
      + "img-src 'self' data:; connect-src 'self'; object-src 'none'; base-uri 'none'; frame-ancestors 'none'";

  private final byte[] token;
  private final Set<String> corsOrigins = new LinkedHashSet<>();

  /**
   * @param token the bearer token, empty for none
   * @param corsOrigins comma-separated allowed origins, blank for none
   */
  HttpGuards(Optional<String> token, String corsOrigins) {
    this.token = token.map(t -> t.getBytes(StandardCharsets.UTF_8)).orElse(null);
    for (String origin : corsOrigins.split(",")) {
      if (!origin.isBlank()) {
        this.corsOrigins.add(origin.trim());
      }
    }
  }

  boolean tokenRequired() {
    return token != null;
  }

  void before(Context ctx) {
    String path = ctx.path();
    ctx.header("X-Content-Type-Options", "nosniff");
    ctx.header("Referrer-Policy", "no-referrer");
    if (path.startsWith("/api/") || path.equals("/metrics")) {
      ctx.header("Cache-Control", "no-store");
    } else {
      ctx.header("Content-Security-Policy", DASHBOARD_CSP);
      ctx.header("X-Frame-Options", "DENY");
    }
    if (cors(ctx)) {
      return; // a CORS preflight, answered (browsers send no credentials with it)
    }
    if (token != null && guarded(path)) {
      String header = ctx.header("Authorization");
      byte[] given = header != null && header.regionMatches(true, 0, "Bearer ", 0, 7)
          ? header.substring(7).trim().getBytes(StandardCharsets.UTF_8) : new byte[0];
      if (!MessageDigest.isEqual(given, token)) { // constant time in the token's length
        ctx.header("WWW-Authenticate", "Bearer realm=\"pairpulse\"");
        throw new ApiException(401, header == null ? "missing bearer token" : "invalid bearer token");
      }
    }
  }

  /** Everything but health and the dashboard's static files (which hold no data) needs the token. */
  static boolean guarded(String path) {
    return (path.startsWith("/api/") && !path.equals(ApiServer.API + "/health")
        && !path.equals(ApiServer.API + "/health/ready")) || path.equals("/metrics");
  }

  /** Adds CORS headers for an allowed origin; true when this was a preflight, now answered. */
  private boolean cors(Context ctx) {
    String origin = ctx.header("Origin");
    if (origin == null || corsOrigins.isEmpty() || !corsOrigins.contains(origin)) {
      return false; // CORS off: no Access-Control headers, browsers refuse cross-origin reads
    }
    ctx.header("Access-Control-Allow-Origin", origin);
    ctx.header("Vary", "Origin");
    if ("OPTIONS".equals(ctx.method().name())) {
      ctx.header("Access-Control-Allow-Methods", "GET, POST");
      ctx.header("Access-Control-Allow-Headers", "Authorization, Content-Type");
      ctx.header("Access-Control-Max-Age", "600");
      ctx.status(204);
      ctx.skipRemainingHandlers();
      return true;
    }
    return false;
  }
}
