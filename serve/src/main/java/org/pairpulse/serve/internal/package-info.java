/**
 * serve's implementation: JSON shapes, the HTTP server, per-segment state. No compatibility promise;
 * use {@link org.pairpulse.serve.ServeServer} and the public packages instead.
 */
package org.pairpulse.serve.internal;
