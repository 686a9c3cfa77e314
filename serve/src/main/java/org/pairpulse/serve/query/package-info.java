/**
 * The table queries behind the API, apart from HTTP: the best pairs by a measure ({@link TopPairs}), the
 * directed rules of one item ({@link DirectedRules}), the most repelling pairs ({@link RepellingPairs}), the
 * most frequent items ({@link TopItems}) and the status document ({@link StatusReport}). Each reads a
 * {@link org.pairpulse.serve.floor.FlooredTable} (never the unfloored table) and returns plain values; the
 * tests hold a slow obvious version of each (sort everything, filter) as the oracle. Suggestions live in
 * {@link org.pairpulse.serve.suggest}.
 */
package org.pairpulse.serve.query;
