/**
 * The product: what a production instance runs. {@code run} (the {@code pairpulse run} command and its configuration
 * parts), {@code pipeline} (ingest, engines, serving and alerts wired into one instance, group mode), {@code live} (the
 * live evaluation, a tap on ingest's path) and {@code evaluation} (how suggestions are scored, shared with the offline
 * analysis). A change of what a running instance does belongs here. Depends on ingest, serve and sketch only; nothing
 * here depends on {@code analysis} or {@code tools}.
 */
package org.pairpulse.ops.product;
