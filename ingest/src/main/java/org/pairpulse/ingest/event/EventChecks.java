package org.pairpulse.ingest.event;

import static org.pairpulse.ingest.event.EventFields.ATTRIBUTES;
import static org.pairpulse.ingest.event.EventFields.BASKET;
import static org.pairpulse.ingest.event.EventFields.END;
import static org.pairpulse.ingest.event.EventFields.ID;
import static org.pairpulse.ingest.event.EventFields.ITEM;
import static org.pairpulse.ingest.event.EventFields.ITEMS;
import static org.pairpulse.ingest.event.EventFields.QTY;
import static org.pairpulse.ingest.event.EventFields.TIME;

import com.fasterxml.jackson.core.JsonToken;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import org.pairpulse.ingest.event.JacksonEventReader.Shape;

/**
 * The contract's checks on the kept {@link EventFields} of a basket or line-item event, in the contract's order:
 * the id, the time, the items (for each element: the count bound, the element, its id's length), the attributes, the
 * time bounds. The first problem is thrown; a record that passes becomes its event.
 */
final class EventChecks {
  private final EventLimits limits;

  EventChecks(EventLimits limits) {
    this.limits = limits;
  }

  /** A basket, or a line item when {@code shape} says so or, for {@link Shape#ANY}, when a {@code basket} key is present. */
  BasketEvent plain(EventFields event, Shape shape, long fallbackTime) throws InvalidEventException {
    boolean line = shape == Shape.LINE_ITEM || (shape == Shape.ANY && event.has(BASKET));
    return line ? readLine(event, fallbackTime) : readBasket(event, fallbackTime);
  }

  private Basket readBasket(EventFields event, long fallbackTime) throws InvalidEventException {
    String id = requiredString(event, ID, "id");
    limits.checkId("basket id", id);
    long time = requiredTime(event, fallbackTime);
    if (!event.given(ITEMS)) {
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "basket has no 'items'");
    }
    List<String> items = items(event);
    Map<String, String> attributes = event.given(ATTRIBUTES) ? attributes(event) : Map.of();
    limits.checkTime(time);
    return new Basket(id, time, items, attributes);
  }

  private LineItem readLine(EventFields event, long fallbackTime) throws InvalidEventException {
    String basketId = requiredString(event, BASKET, "basket");
    limits.checkId("basket id", basketId);
    long time = requiredTime(event, fallbackTime);
    boolean end = false;
    if (event.given(END)) {
      JsonToken token = event.token[END];
      if (token != JsonToken.VALUE_TRUE && token != JsonToken.VALUE_FALSE) {
        throw wrongType("'end' must be true or false");
      }
      end = token == JsonToken.VALUE_TRUE;
    }
    String item = null;
    if (event.given(ITEM)) {
      item = lineItem(event);
    } else if (!end) {
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "line item has no 'item' and is no end marker");
    }
    if (event.given(QTY)) {
      if (!event.token[QTY].isNumeric()) {
        throw wrongType("'qty' must be a number");
      }
      InvalidEventException problem = quantityProblem(event.qty);
      if (problem != null) {
        throw problem;
      }
    }
    limits.checkTime(time);
    return new LineItem(basketId, time, item, end);
  }

  private String lineItem(EventFields event) throws InvalidEventException {
    JsonToken token = event.token[ITEM];
    String id;
    if (token == JsonToken.VALUE_STRING) {
      id = event.text[ITEM];
    } else if (token == JsonToken.START_OBJECT) {
      if (event.itemProblem != null) {
        throw event.itemProblem;
      }
      id = event.item;
    } else {
      throw wrongType("an item must be a string or an object with an 'id'");
    }
    limits.checkId("item id", id);
    return id;
  }

  /** The items, checked element by element: the count bound first, then the element, then its id's length. */
  private List<String> items(EventFields event) throws InvalidEventException {
    if (event.token[ITEMS] != JsonToken.START_ARRAY) {
      throw wrongType("'items' must be an array");
    }
    if (event.itemCount == 0) {
      throw new InvalidEventException(DeadLetterReason.EMPTY_BASKET, "basket has no items");
    }
    for (int i = 0; i < event.itemCount; i++) {
      if (i == limits.maxBasketItems()) {
        throw new InvalidEventException(DeadLetterReason.OVERSIZED_BASKET, "basket has more than "
            + limits.maxBasketItems() + " items (max.basket.items)");
      }
      if (i == event.itemErrorAt) {
        throw event.itemError;
      }
      limits.checkId("item id", event.itemIds[i]);
    }
    return List.of(Arrays.copyOf(event.itemIds, event.itemCount));
  }

  private static Map<String, String> attributes(EventFields event) throws InvalidEventException {
    if (event.token[ATTRIBUTES] != JsonToken.START_OBJECT) {
      throw wrongType("'attributes' must be an object of strings");
    }
    if (event.attributesProblem != null) {
      throw event.attributesProblem;
    }
    return event.attributes;
  }

  static String requiredString(EventFields event, int key, String name) throws InvalidEventException {
    if (!event.given(key)) {
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "missing '" + name + "'");
    }
    return string(event, key, name);
  }

  static String string(EventFields event, int key, String name) throws InvalidEventException {
    if (event.token[key] != JsonToken.VALUE_STRING) {
      throw wrongType("'" + name + "' must be a string");
    }
    return event.text[key];
  }

  private static long requiredTime(EventFields event, long fallbackTime) throws InvalidEventException {
    if (!event.given(TIME)) {
      if (fallbackTime != Long.MIN_VALUE) {
        return fallbackTime;
      }
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "missing 'time'");
    }
    switch (event.token[TIME]) {
      case VALUE_STRING:
        try {
          return EventTimes.parse(event.text[TIME]);
        } catch (IllegalArgumentException e) {
          throw wrongType("'time' " + e.getMessage());
        }
      case VALUE_NUMBER_INT:
        if (!event.timeInRange) {
          throw wrongType("'time' is out of range");
        }
        return event.timeMillis;
      case VALUE_NUMBER_FLOAT:
        throw wrongType("'time' must be an integer of epoch milliseconds");
      default:
        throw wrongType("'time' must be epoch milliseconds or an RFC 3339 string");
    }
  }

  static InvalidEventException quantityProblem(double qty) {
    return qty > 0 && !Double.isInfinite(qty) ? null : wrongType("'qty' must be > 0");
  }

  static InvalidEventException wrongType(String why) {
    return new InvalidEventException(DeadLetterReason.WRONG_TYPE, why);
  }
}
