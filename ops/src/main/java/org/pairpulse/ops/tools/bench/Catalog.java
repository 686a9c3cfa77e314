package org.pairpulse.ops.tools.bench;

/** Item ids of the synthetic catalogs: rank {@code r} is item {@code "i<r>"}. */
final class Catalog {
  private Catalog() {}

  /** The names of items {@code 0..items-1}. */
  static String[] names(int items) {
    String[] names = new String[items];
    for (int i = 0; i < items; i++) {
      names[i] = "i" + i;
    }
    return names;
  }

  /** The item id of a catalog name, or −1 when {@code name} is not one. */
  static int idOf(String name) {
    if (name == null || name.length() < 2 || name.charAt(0) != 'i') {
      return -1;
    }
    try {
      return Integer.parseInt(name, 1, name.length(), 10);
    } catch (NumberFormatException e) {
      return -1;
    }
  }
}
