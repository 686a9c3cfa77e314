package org.pairpulse.serve.internal;

import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Properties;

/** Bytes served from the class path: the OpenAPI document and the chart library the dashboard loads. */
final class Assets {
  private Assets() {}

  static byte[] openApi() {
    return resource("pairpulse/api/openapi.json");
  }

  /** Path under the site root to bytes: {@code /assets/uplot.js} and {@code /assets/uplot.css}. */
  static Map<String, byte[]> dashboardLibraries() {
    String uplot = "META-INF/resources/webjars/uplot/" + webjarVersion("uplot") + "/dist/";
    Map<String, byte[]> assets = new LinkedHashMap<>();
    assets.put("/assets/uplot.js", resource(uplot + "uPlot.iife.min.js"));
    assets.put("/assets/uplot.css", resource(uplot + "uPlot.min.css"));
    return assets;
  }

  static String contentType(String path) {
    return path.endsWith(".js") ? "text/javascript; charset=utf-8" : "text/css; charset=utf-8";
  }

  private static byte[] resource(String path) {
    try (InputStream in = Assets.class.getClassLoader().getResourceAsStream(path)) {
      if (in == null) {
        throw new IllegalStateException("missing resource " + path);
      }
      return in.readAllBytes();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  /** The version of an npm WebJar on the class path (so the dashboard's asset paths carry no version). */
  static String webjarVersion(String name) {
    Properties props = new Properties();
    try (InputStream in = Assets.class.getClassLoader()
        .getResourceAsStream("META-INF/maven/org.webjars.npm/" + name + "/pom.properties")) {
      if (in == null) {
        throw new IllegalStateException("WebJar " + name + " is not on the class path");
      }
      props.load(in);
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
    return props.getProperty("version");
  }
}
