/**
 * Offline analysis for analysts and promotion teams: {@code backtest} (replay a basket history through the engine and
 * score alerts and suggestions), {@code report} (the offer shortlist, CSV and HTML) and {@code terminal} (the progress
 * line these commands print). A change of what a replay, a score or a report says belongs here. Uses {@code product}'s
 * evaluation and the scenario's ground-truth records ({@code tools.scenario}: {@code PlantedPair},
 * {@code ScenarioGroundTruth}), which a backtest scores against.
 */
package org.pairpulse.ops.analysis;
