package org.pairpulse.serve.internal;

import io.javalin.config.JavalinConfig;
import io.javalin.http.Handler;
import java.util.List;

/** Registers the API's routes and lists them as "METHOD path" (the OpenAPI test checks each is documented). */
final class Routes {
  private final JavalinConfig config;
  private final List<String> listed;

  Routes(JavalinConfig config, List<String> listed) {
    this.config = config;
    this.listed = listed;
  }

  void get(String path, Handler handler) {
    listed.add("GET " + path);
    config.routes.get(path, handler);
  }

  void post(String path, Handler handler) {
    listed.add("POST " + path);
    config.routes.post(path, handler);
  }
}
