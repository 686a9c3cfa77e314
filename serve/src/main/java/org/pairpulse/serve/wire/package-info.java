/**
 * The JSON of the API and of alert events: serve's one Jackson mapper ({@link org.pairpulse.serve.wire.Json},
 * non-finite numbers as {@code null}) and the ordered-map shapes ({@link org.pairpulse.serve.wire.Wire}) that the
 * OpenAPI document ({@code pairpulse/api/openapi.json}) describes. A change of shape belongs here and in that
 * document together.
 */
package org.pairpulse.serve.wire;
