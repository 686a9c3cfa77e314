/**
 * serve's implementation: the HTTP server (guards, the request binder, the error mapper, the response cache, the
 * route groups), the per-segment state and the refresh loop. No compatibility promise; its one public class,
 * {@link org.pairpulse.serve.internal.ServeRuntime}, is for {@link org.pairpulse.serve.ServeServer} only. The
 * queries the routes run live in {@link org.pairpulse.serve.query}, the JSON shapes in
 * {@link org.pairpulse.serve.wire}.
 */
package org.pairpulse.serve.internal;
