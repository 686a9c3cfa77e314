package org.pairpulse.ingest.event;

import com.fasterxml.jackson.core.JsonToken;
import java.util.Arrays;
import java.util.Map;

/**
 * What one pass of {@link JacksonEventReader} keeps of one JSON object: for each key of the contract, the token of
 * its last value (null when the key is absent) and what that value says. Problems inside a value (an item that is
 * no string, an attribute that is too long) are kept, not thrown, so that the reader can report a record's problems
 * in the contract's order after the whole record has proved to be well-formed JSON. Reused from record to record.
 */
final class EventFields {
  static final int ID = 0;
  static final int TIME = 1;
  static final int ITEMS = 2;
  static final int ATTRIBUTES = 3;
  static final int BASKET = 4;
  static final int ITEM = 5;
  static final int QTY = 6;
  static final int END = 7;
  static final int SPECVERSION = 8;
  static final int TYPE = 9;
  static final int SOURCE = 10;
  static final int DATACONTENTTYPE = 11;
  static final int DATA = 12;
  static final int DATA_BASE64 = 13;
  static final int KEYS = 14;
  /** Not a key of the contract. */
  static final int UNKNOWN = -1;

  /** The token of each key's last value; null: the key is absent. */
  final JsonToken[] token = new JsonToken[KEYS];
  /** The text of each key whose last value is a string. */
  final String[] text = new String[KEYS];

  /** {@code time} as an integer: its value, and whether it fits epoch milliseconds (a long other than its minimum). */
  long timeMillis;
  boolean timeInRange;
  /** {@code qty} as a number. */
  double qty;

  /** {@code items}: how many elements, the ids of the first {@code maxBasketItems}, the first element in error. */
  int itemCount;
  String[] itemIds = new String[16];
  int itemErrorAt;
  InvalidEventException itemError;

  /** {@code item} of a line: its id, or why it has none. */
  String item;
  InvalidEventException itemProblem;

  /** {@code attributes}: the map, or the first problem in it. */
  Map<String, String> attributes;
  InvalidEventException attributesProblem;

  void clear() {
    Arrays.fill(token, null);
    itemError = null;
    itemProblem = null;
    attributesProblem = null;
  }

  boolean has(int key) {
    return token[key] != null;
  }

  /** Present with a value other than null. */
  boolean given(int key) {
    return token[key] != null && token[key] != JsonToken.VALUE_NULL;
  }

  static int keyOf(String name) {
    switch (name) {
      case "id": return ID;
      case "time": return TIME;
      case "items": return ITEMS;
      case "attributes": return ATTRIBUTES;
      case "basket": return BASKET;
      case "item": return ITEM;
      case "qty": return QTY;
      case "end": return END;
      case "specversion": return SPECVERSION;
      case "type": return TYPE;
      case "source": return SOURCE;
      case "datacontenttype": return DATACONTENTTYPE;
      case "data": return DATA;
      case "data_base64": return DATA_BASE64;
      default: return UNKNOWN;
    }
  }
}
