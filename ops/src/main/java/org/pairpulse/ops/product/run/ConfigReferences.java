package org.pairpulse.ops.product.run;

import java.io.IOException;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Set;
import java.util.function.Consumer;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.kafka.common.config.ConfigData;
import org.apache.kafka.common.config.ConfigException;
import org.apache.kafka.common.config.ConfigTransformer;
import org.apache.kafka.common.config.provider.ConfigProvider;
import org.apache.kafka.common.config.provider.DirectoryConfigProvider;
import org.apache.kafka.common.config.provider.EnvVarConfigProvider;
import org.apache.kafka.common.config.provider.FileConfigProvider;

/**
 * Resolves references in configuration values through Kafka's config providers, so that secrets stay out of the
 * file:
 *
 * <table>
 *   <caption>References</caption>
 *   <tr><th>reference</th><th>value</th><th>provider</th></tr>
 *   <tr><td>{@code ${env:NAME}}</td><td>the environment variable (an error if it is not set)</td>
 *       <td>{@link EnvVarConfigProvider}</td></tr>
 *   <tr><td>{@code ${file:/path/secrets.properties:key}}</td><td>one key of a properties file</td>
 *       <td>{@link FileConfigProvider}</td></tr>
 *   <tr><td>{@code ${dir:/path:name}}</td><td>the content of file {@code name} in directory {@code /path}, trimmed
 *       (a Kubernetes secret mounted as files)</td><td>{@link DirectoryConfigProvider}</td></tr>
 * </table>
 *
 * <p>The earlier form {@code ${file:/path}} (a whole file, trimmed) still reads as {@code ${dir:<parent>:<name>}},
 * with a deprecation note that names the new form.
 */
final class ConfigReferences {
  /** {@code ${file:/path}} with no key: the earlier whole-file form. */
  private static final Pattern WHOLE_FILE = Pattern.compile("\\$\\{file:([^}:]+)}");
  /** A reference that no provider resolved. */
  private static final Pattern LEFT = Pattern.compile("\\$\\{(env|file|dir):(?:([^}]*?):)?([^}]*?)}");

  private final ConfigTransformer transformer;

  /** References resolved against {@code env} (the process environment, or a test's). */
  ConfigReferences(Map<String, String> env) {
    EnvVarConfigProvider environment = new EnvVarConfigProvider(env);
    environment.configure(Map.of());
    FileConfigProvider files = new FileConfigProvider();
    files.configure(Map.of());
    DirectoryConfigProvider directories = new DirectoryConfigProvider();
    directories.configure(Map.of());
    this.transformer = new ConfigTransformer(Map.of("env", environment, "file", files, "dir", new Trimmed(directories)));
  }

  /**
   * The value with every reference replaced.
   *
   * @param deprecations hears of each earlier form read
   * @throws IllegalArgumentException naming the reference that cannot be resolved
   */
  String resolve(String key, String value, Consumer<String> deprecations) {
    String text = rewriteWholeFiles(key, value, deprecations);
    if (!text.contains("${")) {
      return text;
    }
    String resolved;
    try {
      Map<String, String> one = new LinkedHashMap<>();
      one.put(key, text);
      resolved = transformer.transform(one).data().get(key);
    } catch (ConfigException e) {
      throw new IllegalArgumentException("cannot resolve " + text + " (" + e.getMessage() + ")");
    }
    Matcher left = LEFT.matcher(resolved);
    if (left.find()) {
      throw new IllegalArgumentException(switch (left.group(1)) {
        case "env" -> "environment variable " + left.group(3) + " is not set";
        case "dir" -> "cannot read " + Path.of(left.group(2), left.group(3));
        default -> "cannot read key " + left.group(3) + " of " + left.group(2);
      });
    }
    return resolved;
  }

  private static String rewriteWholeFiles(String key, String value, Consumer<String> deprecations) {
    Matcher m = WHOLE_FILE.matcher(value);
    StringBuilder out = new StringBuilder();
    while (m.find()) {
      Path file = Path.of(m.group(1).trim()).toAbsolutePath();
      String replacement = "${dir:" + file.getParent() + ":" + file.getFileName() + "}";
      deprecations.accept(key + ": '${file:" + m.group(1) + "}' (a whole file) is deprecated: write '" + replacement
          + "'");
      m.appendReplacement(out, Matcher.quoteReplacement(replacement));
    }
    m.appendTail(out);
    return out.toString();
  }

  /** A provider whose values are trimmed (a secret file's final newline is not part of the secret). */
  private record Trimmed(ConfigProvider delegate) implements ConfigProvider {
    @Override
    public ConfigData get(String path) {
      return trimmed(delegate.get(path));
    }

    @Override
    public ConfigData get(String path, Set<String> keys) {
      return trimmed(delegate.get(path, keys));
    }

    private static ConfigData trimmed(ConfigData data) {
      Map<String, String> out = new LinkedHashMap<>();
      data.data().forEach((k, v) -> out.put(k, v == null ? null : v.strip()));
      return new ConfigData(out, data.ttl());
    }

    @Override
    public void configure(Map<String, ?> configs) {
      delegate.configure(configs);
    }

    @Override
    public void close() throws IOException {
      delegate.close();
    }
  }
}
