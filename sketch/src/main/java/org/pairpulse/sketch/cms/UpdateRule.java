package org.pairpulse.sketch.cms;

/** How a count-min sketch applies an update. */
public enum UpdateRule {
  /**
   * Every row's counter grows by the weight. The sketch is linear: sketches of disjoint streams add up
   * to the sketch of their union, can be subtracted and scaled (Cormode and Muthukrishnan 2005).
   */
  LINEAR,
  /**
   * Only the counters below the new estimate grow, up to it (Estan and Varghese 2002, "New directions
   * in traffic measurement and accounting"). Never less accurate than {@link #LINEAR}, often much
   * better, but not linear: use it only where nothing is ever subtracted. Adding two such sketches
   * still gives a valid overestimate of the union (each is below the linear sketch of its stream),
   * but not the sketch that the union stream would have built.
   */
  CONSERVATIVE
}
