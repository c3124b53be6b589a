//! The state of one server: the limits in force, the counters reported by `server.info` (calls
//! served and failed, open connections, calls in flight) and by `GET /metrics` ([`Metrics`]),
//! the tokens in force ([`Tokens`]), the request and call id sequences, the registered site
//! networks with their solved-results cache, and the audit file.
//!
//! `steamcell serve` and `steamcell stdio` build one [`ServerCtx`] from their flags and hand it
//! (as an `Arc`) to every transport and, through the method registry, to the methods that read it
//! (`server.info`, `water.batch`'s row limit, the `/site` route). An in-process call
//! ([`super::call`]) gets a fresh context with the default limits.
//!
//! Invariant: nothing here is process-wide; two servers in one process (as in the tests) count,
//! limit and cache separately. Counters are relaxed atomics and never block.

use super::limits::Settings;
use super::metrics::Metrics;
use super::site::Sites;
use super::tokens::Tokens;
use std::fs::File;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::time::Instant;

/// The state of one server, see the module doc.
#[derive(Debug)]
pub struct ServerCtx {
    /// The limits in force.
    pub limits: Settings,
    started: Instant,
    requests: AtomicU64,
    failed: AtomicU64,
    connections: AtomicU64,
    in_flight: AtomicU64,
    next_request: AtomicU64,
    next_call: AtomicU64,
    sites: Sites,
    audit: Option<Mutex<File>>,
    metrics: std::sync::OnceLock<Metrics>,
    tokens: Tokens,
}

impl Default for ServerCtx {
    fn default() -> ServerCtx {
        ServerCtx::new(Settings::DEFAULT)
    }
}

impl ServerCtx {
    /// A context with these limits, no sites and no audit file; its uptime starts now.
    pub fn new(limits: Settings) -> ServerCtx {
        ServerCtx {
            limits,
            started: Instant::now(),
            requests: AtomicU64::new(0),
            failed: AtomicU64::new(0),
            connections: AtomicU64::new(0),
            in_flight: AtomicU64::new(0),
            next_request: AtomicU64::new(1),
            next_call: AtomicU64::new(1),
            sites: Sites::default(),
            audit: None,
            metrics: std::sync::OnceLock::new(),
            tokens: Tokens::none(),
        }
    }

    /// The same context with these registered sites.
    pub fn with_sites(mut self, sites: Sites) -> ServerCtx {
        self.sites = sites;
        self
    }

    /// The same context appending its audit lines to `file`.
    pub fn with_audit(mut self, file: File) -> ServerCtx {
        self.audit = Some(Mutex::new(file));
        self
    }

    /// The same context requiring these tokens.
    pub fn with_tokens(mut self, tokens: Tokens) -> ServerCtx {
        self.tokens = tokens;
        self
    }

    /// The counters of `GET /metrics`.
    /// (made on first use, so that an in-process call's fresh context costs nothing for them;
    /// their start time is the context's).
    pub fn metrics(&self) -> &Metrics {
        self.metrics.get_or_init(Metrics::new)
    }

    /// The tokens in force (none: every caller is served).
    pub fn tokens(&self) -> &Tokens {
        &self.tokens
    }

    /// The registered site networks and their cache.
    pub fn sites(&self) -> &Sites {
        &self.sites
    }

    /// The audit file, when auditing is on.
    pub fn audit_file(&self) -> Option<&Mutex<File>> {
        self.audit.as_ref()
    }

    /// Seconds since the context was made.
    pub fn uptime_s(&self) -> f64 {
        self.started.elapsed().as_secs_f64()
    }

    /// Counts one call (or refused request) as served, when it starts (so that `server.info`
    /// counts itself).
    pub fn count_request(&self) {
        self.requests.fetch_add(1, Ordering::Relaxed);
    }

    /// Counts one served call (or refused request) as failed.
    pub fn count_failure(&self) {
        self.failed.fetch_add(1, Ordering::Relaxed);
    }

    /// Calls answered (and requests refused) so far, all transports.
    pub fn requests_served(&self) -> u64 {
        self.requests.load(Ordering::Relaxed)
    }

    /// Calls that answered an error, and refused requests, so far.
    pub fn requests_failed(&self) -> u64 {
        self.failed.load(Ordering::Relaxed)
    }

    /// Connections open now.
    pub fn connections(&self) -> u64 {
        self.connections.load(Ordering::Relaxed)
    }

    /// Counts a newly opened connection until the returned guard is dropped.
    pub fn open_connection(self: &Arc<Self>) -> Connection {
        self.connections.fetch_add(1, Ordering::Relaxed);
        self.metrics().connection_opened();
        Connection(Arc::clone(self))
    }

    /// Method calls running now.
    pub fn in_flight(&self) -> u64 {
        self.in_flight.load(Ordering::Relaxed)
    }

    /// Starts a call unless `limits.max_in_flight` calls already run.
    pub fn try_begin(&self) -> Option<InFlight<'_>> {
        let limit = u64::from(self.limits.max_in_flight);
        let prev = self.in_flight.fetch_add(1, Ordering::AcqRel);
        if prev >= limit {
            self.in_flight.fetch_sub(1, Ordering::AcqRel);
            None
        } else {
            Some(InFlight(self))
        }
    }

    /// The next request id (one per HTTP request or stdio line).
    pub fn next_request_id(&self) -> u64 {
        self.next_request.fetch_add(1, Ordering::Relaxed)
    }

    /// The next call id (one per method call).
    pub fn next_call_id(&self) -> u64 {
        self.next_call.fetch_add(1, Ordering::Relaxed)
    }
}

/// Held while a connection is open; counts it in [`ServerCtx::connections`].
#[derive(Debug)]
pub struct Connection(Arc<ServerCtx>);

impl Drop for Connection {
    fn drop(&mut self) {
        self.0.connections.fetch_sub(1, Ordering::Relaxed);
    }
}

/// Held while a method call runs; see [`ServerCtx::try_begin`].
#[derive(Debug)]
pub struct InFlight<'a>(&'a ServerCtx);

impl Drop for InFlight<'_> {
    fn drop(&mut self) {
        self.0.in_flight.fetch_sub(1, Ordering::AcqRel);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn in_flight_slots_are_limited_and_released() {
        let ctx = ServerCtx::new(Settings {
            max_in_flight: 1,
            ..Settings::DEFAULT
        });
        let first = ctx.try_begin().expect("one slot");
        assert!(ctx.try_begin().is_none(), "the only slot is taken");
        assert_eq!(ctx.in_flight(), 1);
        drop(first);
        assert_eq!(ctx.in_flight(), 0);
        assert!(ctx.try_begin().is_some());
    }

    #[test]
    fn contexts_count_apart() {
        let a = Arc::new(ServerCtx::default());
        let b = ServerCtx::default();
        a.count_request();
        a.count_failure();
        a.count_request();
        let conn = a.open_connection();
        assert_eq!((a.requests_served(), a.requests_failed()), (2, 1));
        assert_eq!(a.connections(), 1);
        assert_eq!((b.requests_served(), b.connections()), (0, 0));
        drop(conn);
        assert_eq!(a.connections(), 0);
    }
}
