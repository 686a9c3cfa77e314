/**
 * Developer and demo tools, never read by a production instance: {@code bench} (the {@code pairpulse bench}
 * commands), {@code demo} (the embedded demo on the in-process broker), {@code scenario} (the invented demo world and
 * its ground truth), {@code drift} (the drift benchmark's stream family and exact reference) and {@code group} (the
 * multi-instance benchmark). A change of a benchmark, the demo or its invented data belongs here. May use everything
 * in {@code product} and {@code analysis}.
 */
package org.pairpulse.ops.tools;
