package org.pairpulse.ops.product.run;

import java.net.URI;
import java.net.URISyntaxException;
import java.util.Locale;
import java.util.regex.Pattern;

/** Which configuration values are secret, and how they are shown: never in full. */
final class Secrets {
  static final String MASK = "******";
  /** Kafka client settings that carry credentials: passwords, JAAS lines, keys, tokens, client secrets. */
  private static final Pattern SECRET_NAME = Pattern.compile(
      ".*(password|secret|jaas|token|credential|user\\.info|\\.key$|keystore\\.key|private).*");

  private Secrets() {}

  static boolean isSecret(String key) {
    String k = key.toLowerCase(Locale.ROOT);
    return k.equals("serve.token") || (k.startsWith("kafka.") && SECRET_NAME.matcher(k).matches());
  }

  /** The value as it may be shown: secrets masked, credentials and query strings of URLs masked. */
  static String show(String key, String value) {
    if (value == null || value.isEmpty()) {
      return value;
    }
    if (isSecret(key)) {
      return MASK;
    }
    if (key.equals("alerts.webhook.url")) {
      return maskUrl(value);
    }
    return value;
  }

  /** {@code https://user:pw@host/path?token=x} → {@code https://******@host/path?******}. */
  static String maskUrl(String url) {
    try {
      URI uri = new URI(url);
      if (uri.getRawUserInfo() == null && uri.getRawQuery() == null) {
        return url;
      }
      StringBuilder out = new StringBuilder();
      out.append(uri.getScheme()).append("://");
      if (uri.getRawUserInfo() != null) {
        out.append(MASK).append('@');
      }
      out.append(uri.getHost());
      if (uri.getPort() >= 0) {
        out.append(':').append(uri.getPort());
      }
      out.append(uri.getRawPath() == null ? "" : uri.getRawPath());
      if (uri.getRawQuery() != null) {
        out.append('?').append(MASK);
      }
      return out.toString();
    } catch (URISyntaxException | RuntimeException e) {
      return MASK;
    }
  }
}
