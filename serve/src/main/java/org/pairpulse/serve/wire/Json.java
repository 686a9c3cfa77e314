package org.pairpulse.serve.wire;

import com.fasterxml.jackson.core.JsonGenerator;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonSerializer;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializerProvider;
import com.fasterxml.jackson.databind.module.SimpleModule;
import java.io.IOException;
import java.io.UncheckedIOException;

/**
 * The one Jackson mapper of serve. JSON has no NaN or infinity: a non-finite number (an undefined
 * ratio, an unbounded lift interval) is written as {@code null}.
 */
public final class Json {
  private Json() {}

  private static final ObjectMapper MAPPER = create();

  private static ObjectMapper create() {
    SimpleModule finiteOnly = new SimpleModule("finite-numbers");
    JsonSerializer<Double> doubles = new JsonSerializer<>() {
      @Override
      public void serialize(Double value, JsonGenerator gen, SerializerProvider serializers) throws IOException {
        if (value == null || value.isNaN() || value.isInfinite()) {
          gen.writeNull();
        } else {
          gen.writeNumber(value);
        }
      }
    };
    finiteOnly.addSerializer(Double.class, doubles);
    finiteOnly.addSerializer(Double.TYPE, doubles);
    return new ObjectMapper().registerModule(finiteOnly);
  }

  public static ObjectMapper mapper() {
    return MAPPER;
  }

  /** {@code value} as UTF-8 JSON bytes. */
  public static byte[] bytes(Object value) {
    try {
      return MAPPER.writeValueAsBytes(value);
    } catch (JsonProcessingException e) {
      throw new UncheckedIOException(e);
    }
  }
}
