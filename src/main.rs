//! The `steamcell` command line: parses arguments and calls the library (`server`, `api`).
//! Exit codes: 0 success, 1 start-up or I/O failure, 2 a method or cell error, 3 a validation
//! failure (a failing case, or a digest other than the one expected).
//!
//! Invariant: no JSON here; `call` passes its params text to `api::call_text` and prints the
//! text it returns.

use clap::parser::ValueSource;
use clap::{ArgMatches, CommandFactory, FromArgMatches, Parser, Subcommand};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use steamcell::api::limits;
use steamcell::server::{config, ServeConfig, TokenSource};

#[derive(Parser)]
#[command(
    name = "steamcell",
    version,
    about = "Water and steam properties (IAPWS-IF97) as a local calculation server"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Serve JSON-RPC 2.0 over HTTP POST and WebSocket (HTTPS and WSS with --tls-cert), plus
    /// GET /health, /schema, /metrics, /validation, /cell/{quantity}, /site/{name}/{quantity}
    /// and the bulk route POST /columns.
    ///
    /// Security: listens on loopback by default. A non-loopback address needs tokens
    /// (--tokens-file, --token-file or STEAMCELL_TOKEN) and TLS (--tls-cert/--tls-key; or
    /// --insecure-http to serve plain HTTP anyway); with tokens every request except
    /// GET /health and /addin/ needs `Authorization: Bearer <token>` (else 401), and a token's
    /// allow-list limits its methods (else 403 or error 1010). SIGHUP reloads the tokens file
    /// and the certificate. The built-in self-test runs first: a failing case refuses the
    /// start. GET /metrics (Prometheus text) and GET /validation (the validation record) sit
    /// behind the token like every route but /health. The Host header must name this server
    /// (localhost, a loopback or the listen address, or --allow-host; else 403). Requests with
    /// an Origin header are refused (403) unless --allow-origin names it; CORS headers are sent
    /// only for such origins. POST bodies must be Content-Type: application/json (else 415;
    /// /columns takes application/x-steamcell-columns).
    /// Beyond a limit: JSON-RPC error 1008 (limit_exceeded) with data {what, limit, value};
    /// HTTP 413 for body, nesting and batch size, 408 for a slow body, 503 for a late answer;
    /// a call refused by --max-in-flight answers 1008 in its JSON-RPC response (503 on the
    /// plain routes GET /cell, /site and POST /columns, which count as calls).
    #[command(verbatim_doc_comment)]
    Serve(Box<ServeArgs>),
    /// Newline-delimited JSON-RPC 2.0 on stdin/stdout (one request or batch per line).
    Stdio,
    /// Run one method and print its JSON result: in-process, or with --url on a server.
    Call {
        /// Method name, e.g. water.state.
        method: String,
        /// Params as one JSON object (default {}).
        params: Option<String>,
        /// The units of bare numbers and of the answer, replacing the params' `units`: a preset
        /// (si, engineering, us, bar, bar_th), key=unit items (preset=bar,p=barg,flow=t/h) or a
        /// JSON object.
        #[arg(long, value_name = "UNITS")]
        units: Option<String>,
        /// Call the server at this URL (http://HOST:PORT or https://HOST:PORT) instead of
        /// computing in-process.
        #[arg(long, value_name = "URL")]
        url: Option<String>,
        /// With an https:// URL: trust the certificates of this PEM file (a private CA or a
        /// self-signed server certificate) instead of the system's trust store.
        #[arg(long, value_name = "FILE", requires = "url")]
        ca_file: Option<PathBuf>,
        /// With --url: file holding the bearer token (else STEAMCELL_TOKEN).
        #[arg(long, value_name = "FILE", requires = "url")]
        token_file: Option<PathBuf>,
        /// Refuse to compute unless the validation digest (server.info's; in-process, this
        /// build's) is this one (exit code 3, both digests named).
        #[arg(long, value_name = "DIGEST")]
        expect_digest: Option<String>,
    },
    /// Write the validation record of this build on this machine: every built-in
    /// verification case, the round-trip and IF97-vs-IAPWS-95 summaries, the digest, the build
    /// and the machine. Prints a one-line summary; exit code 3 when anything failed.
    Validate {
        /// Write the record as one self-contained HTML document to FILE.
        #[arg(long, value_name = "FILE.html")]
        report: Option<PathBuf>,
        /// Write the record as JSON to FILE ("-" or no value: standard output).
        #[arg(long, value_name = "FILE", num_args = 0..=1, default_missing_value = "-")]
        json: Option<String>,
        /// Fail (exit code 3) unless this build's validation digest is this one.
        #[arg(long, value_name = "DIGEST")]
        expect_digest: Option<String>,
    },
    /// Mint a new token for a tokens file: prints the token on standard error (give it to its
    /// user; it is kept nowhere) and the line to add to the --tokens-file (its SHA-256 hash and
    /// options) on standard output, so `steamcell token NAME >> tokens` appends the line.
    Token {
        /// The token's name (the user or service), as the audit file will show it.
        name: String,
        /// Refuse the token from this instant on (UTC): YYYY-MM-DD or YYYY-MM-DDTHH:MM[:SS].
        #[arg(long, value_name = "WHEN")]
        expires: Option<String>,
        /// Allow only these methods (comma-separated; group.* for a group), e.g.
        /// water.*,server.info.
        #[arg(long, value_name = "LIST")]
        methods: Option<String>,
        /// Write the token to FILE (created with owner-only permissions) and print only the
        /// line for the tokens file.
        #[arg(long, value_name = "FILE")]
        token_out: Option<PathBuf>,
    },
    /// Print one property as a bare number, e.g. `steamcell get h p=10MPa T=500degC --units si`
    /// or `steamcell get p p=42barg T=410degC --unit barg`.
    Get {
        /// Result field, e.g. h.
        quantity: String,
        /// Given quantities and options as name=value (units=, units.p=barg, unit=, ambient=).
        pairs: Vec<String>,
        /// The units of bare numbers and of the answer (as units=): a preset, key=unit items or
        /// a JSON object.
        #[arg(long, value_name = "UNITS")]
        units: Option<String>,
        /// The unit of the answered quantity (as unit=), e.g. barg, t/h, MW.
        #[arg(long, value_name = "UNIT")]
        unit: Option<String>,
    },
    /// Print one number of a site balance, e.g.
    /// `steamcell site examples/site/site.json net_power units.MP_users.demand="40 t/h"`.
    /// QUANTITY is a site total (net_power, fuel_heat_input, ...) or a dotted path into the
    /// balance.solve result (units.BPT.power, streams.ds1_out.state.T); each path=value sets a
    /// specification of the network first (as the path of balance.sweep); units= and ambient=
    /// as for the methods.
    Site {
        /// The network file (the `network` of balance.solve, or whole params with one).
        file: std::path::PathBuf,
        /// A site total or a dotted path into the result.
        quantity: String,
        /// Specifications to change, as path=value, and units=/unit=/ambient=.
        pairs: Vec<String>,
        /// The units of bare numbers and of the answer (as units=): a preset, key=unit items or
        /// a JSON object.
        #[arg(long, value_name = "UNITS")]
        units: Option<String>,
        /// The unit of the answered quantity (as unit=), e.g. MW, t/h.
        #[arg(long, value_name = "UNIT")]
        unit: Option<String>,
    },
    /// Write the OpenRPC document.
    Schema {
        /// Output file ("-" for stdout).
        #[arg(long, default_value = "schema/steamcell.openrpc.json")]
        out: String,
    },
}

#[derive(clap::Args)]
struct ServeArgs {
    /// Read the serve settings from this TOML file (every flag below has a key of the same
    /// name, e.g. max-body-bytes = 1048576); flags given on the command line win over it.
    #[arg(long, value_name = "FILE")]
    config: Option<PathBuf>,
    /// Check the settings (config file, tokens file, certificate and key, audit file, sites,
    /// the built-in self-test) and exit without serving: 0 when the server would start.
    #[arg(long)]
    check_config: bool,
    /// Address to listen on (port 0 picks a free port). Non-loopback needs tokens and TLS.
    #[arg(long, default_value = steamcell::server::DEFAULT_LISTEN)]
    listen: String,
    /// File holding one bearer token (surrounding whitespace ignored), named "default" in the
    /// audit file. Overrides STEAMCELL_TOKEN.
    #[arg(long, value_name = "PATH", conflicts_with = "tokens_file")]
    token_file: Option<PathBuf>,
    /// Named tokens, one line per user or service: NAME sha256:HEX [expires=WHEN]
    /// [methods=LIST] (see `steamcell token`); reloaded on SIGHUP.
    #[arg(long, value_name = "FILE")]
    tokens_file: Option<PathBuf>,
    /// PEM certificate chain: serve HTTPS and WSS on the listen port (with --tls-key).
    #[arg(long, value_name = "FILE", requires = "tls_key")]
    tls_cert: Option<PathBuf>,
    /// PEM private key of --tls-cert.
    #[arg(long, value_name = "FILE", requires = "tls_cert")]
    tls_key: Option<PathBuf>,
    /// Allow plain HTTP on a non-loopback address (tokens then cross the network in clear
    /// text: only behind a TLS proxy or on a trusted network); a warning is printed at start.
    #[arg(long)]
    insecure_http: bool,
    /// Accept this name in the Host header besides localhost and the listen address (repeatable).
    #[arg(long, value_name = "NAME")]
    allow_host: Vec<String>,
    /// Allow cross-origin requests from this origin, e.g. https://sheet.example (repeatable);
    /// CORS headers and preflight answers are given for these origins only.
    #[arg(long, value_name = "ORIGIN")]
    allow_origin: Vec<String>,
    /// Largest HTTP request body, bytes (beyond it HTTP 413 with error 1008).
    #[arg(long, value_name = "BYTES", default_value_t = limits::MAX_REQUEST_BODY_BYTES)]
    max_body_bytes: u32,
    /// Largest response body, bytes.
    #[arg(long, value_name = "BYTES", default_value_t = limits::MAX_RESPONSE_BODY_BYTES)]
    max_response_bytes: u32,
    /// Most calls in one JSON-RPC batch array (HTTP: error 1008 before parsing).
    #[arg(long, value_name = "N", default_value_t = limits::MAX_BATCH_REQUESTS)]
    max_batch_requests: u32,
    /// Most rows in one water.batch call (beyond it error 1008).
    #[arg(long, value_name = "N", default_value_t = limits::MAX_BATCH_ROWS)]
    max_batch_rows: u32,
    /// Deepest nesting of [ and { in a request (a byte scan of an HTTP body before parsing; the
    /// params of each WebSocket call; error 1008). A WebSocket message deeper than the JSON
    /// parser's own limit of 128 fails to parse (-32700) first.
    #[arg(long, value_name = "N", default_value_t = limits::MAX_JSON_DEPTH)]
    max_json_depth: u32,
    /// Largest WebSocket message, bytes.
    #[arg(long, value_name = "BYTES", default_value_t = limits::MAX_WS_MESSAGE_BYTES)]
    max_ws_message_bytes: u32,
    /// Most simultaneous connections (HTTP and WebSocket); beyond it new connections are refused.
    #[arg(long, value_name = "N", default_value_t = limits::MAX_CONNECTIONS)]
    max_connections: u32,
    /// Most method calls running at once over all connections (GET /cell, /site and
    /// POST /columns requests included); beyond it a call answers error 1008 (limit_exceeded)
    /// at once instead of queueing.
    #[arg(long, value_name = "N", default_value_t = limits::MAX_IN_FLIGHT)]
    max_in_flight: u32,
    /// Time limit of one HTTP request (GET routes included), seconds: a body not received in
    /// time answers 408, an answer not ready in time 503 (error 1008; the computation itself
    /// runs to its end, and counts against --max-in-flight until then). Also the time a new
    /// connection has to send its first request headers. WebSocket calls have no time limit.
    #[arg(long, value_name = "SECONDS", default_value_t = limits::REQUEST_TIMEOUT_MS as f64 / 1000.0)]
    request_timeout: f64,
    /// Log level of steamcell's own log lines on stderr: error, warn, info (one line per call
    /// and per refusal, with its request id), debug or trace. Other crates log warnings only;
    /// RUST_LOG, when set, replaces this filter entirely.
    #[arg(long, value_name = "LEVEL", default_value = "warn")]
    log_level: String,
    /// Append one JSON line per method call to this file (time, request id, method, params,
    /// result digest, error code, version, formulation, validation digest); GET /cell, /site
    /// and POST /columns requests are calls too.
    #[arg(long, value_name = "FILE")]
    audit: Option<std::path::PathBuf>,
    /// Register a site network for GET /site/NAME/QUANTITY (repeatable): NAME=FILE, the file
    /// holding the `network` of balance.solve. Each is read and solved at start.
    #[arg(long, value_name = "NAME=FILE")]
    site: Vec<String>,
    /// Stop when standard input reaches its end: for a program (a spreadsheet add-in) that
    /// starts the server as its child and holds its stdin, so that the server ends with it
    /// even when that program is killed.
    #[arg(long)]
    stop_on_stdin_eof: bool,
}

/// Whether the flag `id` of the serve subcommand was given on the command line.
fn on_command_line(m: &ArgMatches, id: &str) -> bool {
    m.value_source(id) == Some(ValueSource::CommandLine)
}

impl ServeArgs {
    /// The settings: the command line over the config file over the environment and the
    /// defaults (see `steamcell::server::config`). Also the log level and the stdin flag.
    fn settings(&self, m: &ArgMatches) -> Result<(ServeConfig, String, bool), String> {
        let file = match &self.config {
            Some(p) => config::read(p)?,
            None => config::ConfigFile::default(),
        };
        let cli = |id: &str| on_command_line(m, id);
        macro_rules! pick {
            ($field:ident, $id:literal) => {
                if cli($id) {
                    self.$field.clone()
                } else {
                    file.$field.clone().unwrap_or_else(|| self.$field.clone())
                }
            };
        }
        let listen: String = pick!(listen, "listen");
        let insecure_http: bool = pick!(insecure_http, "insecure_http");
        let allow_host: Vec<String> = pick!(allow_host, "allow_host");
        let allow_origin: Vec<String> = pick!(allow_origin, "allow_origin");
        let request_timeout: f64 = pick!(request_timeout, "request_timeout");
        let log_level: String = pick!(log_level, "log_level");
        let site: Vec<String> = pick!(site, "site");
        let stop_on_stdin_eof: bool = pick!(stop_on_stdin_eof, "stop_on_stdin_eof");
        let audit = if cli("audit") {
            self.audit.clone()
        } else {
            file.audit.clone().or_else(|| self.audit.clone())
        };
        let tokens = if cli("tokens_file") || cli("token_file") {
            token_source(self.tokens_file.as_deref(), self.token_file.as_deref())?
        } else if file.tokens_file.is_some() || file.token_file.is_some() {
            if file.tokens_file.is_some() && file.token_file.is_some() {
                return Err(
                    "the config file gives both tokens-file and token-file: keep one".to_string(),
                );
            }
            token_source(file.tokens_file.as_deref(), file.token_file.as_deref())?
        } else {
            match std::env::var("STEAMCELL_TOKEN") {
                Ok(t) => TokenSource::Single(t.trim().to_string()),
                Err(_) => TokenSource::None,
            }
        };
        if matches!(&tokens, TokenSource::Single(t) if t.is_empty()) {
            return Err("the token is empty".to_string());
        }
        let (cert, key) = if cli("tls_cert") {
            (self.tls_cert.clone(), self.tls_key.clone())
        } else {
            (file.tls_cert.clone(), file.tls_key.clone())
        };
        let tls = match (cert, key) {
            (Some(cert), Some(key)) => Some(steamcell::server::tls::TlsFiles { cert, key }),
            (None, None) => None,
            _ => {
                return Err(
                    "give both tls-cert and tls-key (the certificate chain and its key)"
                        .to_string(),
                )
            }
        };
        if !(request_timeout.is_finite() && request_timeout > 0.0) {
            return Err("--request-timeout must be a positive number of seconds".to_string());
        }
        let cfg = ServeConfig {
            listen,
            tokens,
            tls,
            insecure_http,
            allow_hosts: allow_host,
            allow_origins: allow_origin,
            limits: limits::Settings {
                max_request_body_bytes: pick!(max_body_bytes, "max_body_bytes"),
                max_response_body_bytes: pick!(max_response_bytes, "max_response_bytes"),
                max_batch_requests: pick!(max_batch_requests, "max_batch_requests"),
                max_batch_rows: pick!(max_batch_rows, "max_batch_rows"),
                max_json_depth: pick!(max_json_depth, "max_json_depth"),
                max_ws_message_bytes: pick!(max_ws_message_bytes, "max_ws_message_bytes"),
                max_connections: pick!(max_connections, "max_connections"),
                max_in_flight: pick!(max_in_flight, "max_in_flight"),
                request_timeout_ms: (request_timeout * 1000.0).round().max(1.0) as u64,
            },
            audit,
            sites: site
                .iter()
                .map(|s| {
                    s.split_once('=')
                        .map(|(n, f)| (n.trim().to_string(), PathBuf::from(f.trim())))
                        .ok_or_else(|| format!("--site {s}: write NAME=FILE"))
                })
                .collect::<Result<_, _>>()?,
        };
        Ok((cfg, log_level, stop_on_stdin_eof))
    }
}

/// The token source of a tokens file or a one-token file.
fn token_source(
    tokens_file: Option<&Path>,
    token_file: Option<&Path>,
) -> Result<TokenSource, String> {
    match (tokens_file, token_file) {
        (Some(p), _) => Ok(TokenSource::File(p.to_path_buf())),
        (None, Some(path)) => Ok(TokenSource::Single(
            std::fs::read_to_string(path)
                .map_err(|e| format!("cannot read the token file {}: {e}", path.display()))?
                .trim()
                .to_string(),
        )),
        (None, None) => Ok(TokenSource::None),
    }
}

fn runtime() -> std::io::Result<tokio::runtime::Runtime> {
    tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
}

fn init_logs(level: &str) {
    use std::io::IsTerminal;
    tracing_subscriber::fmt()
        .with_writer(std::io::stderr)
        // Colours only on a terminal: a log file or the journal gets plain text.
        .with_ansi(std::io::stderr().is_terminal())
        .with_env_filter(
            tracing_subscriber::EnvFilter::try_from_default_env().unwrap_or_else(|_| {
                tracing_subscriber::EnvFilter::new(format!("warn,steamcell={level}"))
            }),
        )
        .init();
}

/// Debug builds only: the fault of one test (`steamcell_core::water::if97::fault`), switched on
/// by `STEAMCELL_DEBUG_CORRUPT_COEFFICIENT`. A release build has no such switch.
fn debug_fault() {
    #[cfg(debug_assertions)]
    if std::env::var_os("STEAMCELL_DEBUG_CORRUPT_COEFFICIENT").is_some() {
        steamcell::water::if97::fault::corrupt_one_coefficient();
    }
}

fn main() -> ExitCode {
    debug_fault();
    let matches = Cli::command().get_matches();
    let cli = match Cli::from_arg_matches(&matches) {
        Ok(c) => c,
        Err(e) => e.exit(),
    };
    match cli.command {
        Command::Serve(args) => {
            let serve_matches = matches
                .subcommand_matches("serve")
                .cloned()
                .unwrap_or_default();
            let (cfg, level, stop_on_eof) = match args.settings(&serve_matches) {
                Ok(c) => c,
                Err(e) => {
                    eprintln!("steamcell: {e}");
                    return ExitCode::from(1);
                }
            };
            init_logs(&level);
            if args.check_config {
                return match steamcell::server::check(&cfg) {
                    Ok(exposure) => {
                        if let steamcell::server::Exposure::Insecure(w) = exposure {
                            eprintln!("steamcell: {w}");
                        }
                        println!(
                            "steamcell: the settings are valid: serve would listen on {} ({}, {}, {})",
                            cfg.listen,
                            if cfg.tls.is_some() { "HTTPS" } else { "plain HTTP" },
                            match &cfg.tokens {
                                TokenSource::None => "no token".to_string(),
                                TokenSource::Single(_) => "one token".to_string(),
                                TokenSource::File(p) => format!("tokens of {}", p.display()),
                            },
                            steamcell::api::validation_digest()
                        );
                        ExitCode::SUCCESS
                    }
                    Err(e) => {
                        eprintln!("steamcell: cannot serve on {}: {e}", cfg.listen);
                        ExitCode::from(1)
                    }
                };
            }
            if stop_on_eof {
                stop_on_stdin_eof();
            }
            match runtime().and_then(|rt| rt.block_on(steamcell::server::serve(&cfg))) {
                Ok(()) => ExitCode::SUCCESS,
                Err(e) => {
                    eprintln!("steamcell: cannot serve on {}: {e}", cfg.listen);
                    ExitCode::from(1)
                }
            }
        }
        Command::Stdio => {
            init_logs("warn");
            match runtime().and_then(|rt| rt.block_on(steamcell::server::stdio::serve_stdio())) {
                Ok(()) => ExitCode::SUCCESS,
                Err(e) => {
                    eprintln!("steamcell: stdio: {e}");
                    ExitCode::from(1)
                }
            }
        }
        Command::Call {
            method,
            params,
            url,
            ca_file,
            token_file,
            expect_digest,
            units,
        } => {
            init_logs("warn");
            let params = params.as_deref().unwrap_or("{}");
            let params = match steamcell::api::params_with_units(params, units.as_deref()) {
                Ok(p) => p,
                Err(e) => {
                    eprintln!("error {}: {}", e.code, e.message);
                    return ExitCode::from(2);
                }
            };
            let params = params.as_str();
            let Some(url) = url else {
                if let Some(want) = &expect_digest {
                    let have = steamcell::api::validation_digest();
                    if *want != have {
                        eprintln!(
                            "steamcell: refusing to compute: this build's validation digest {have} is not the expected {want}"
                        );
                        return ExitCode::from(3);
                    }
                }
                return match steamcell::api::call_text(&method, params) {
                    Ok(pretty) => print_out(&pretty),
                    Err(e) => {
                        eprintln!("error {}: {}", e.code, e.message);
                        ExitCode::from(2)
                    }
                };
            };
            let token = match &token_file {
                Some(p) => match std::fs::read_to_string(p) {
                    Ok(t) => Some(t.trim().to_string()),
                    Err(e) => {
                        eprintln!("steamcell: cannot read the token file {}: {e}", p.display());
                        return ExitCode::from(1);
                    }
                },
                None => std::env::var("STEAMCELL_TOKEN")
                    .ok()
                    .map(|t| t.trim().to_string())
                    .filter(|t| !t.is_empty()),
            };
            use steamcell::server::client::{call_text, ClientError};
            match call_text(
                &url,
                ca_file.as_deref(),
                token,
                expect_digest.as_deref(),
                &method,
                params,
            ) {
                Ok(pretty) => print_out(&pretty),
                Err(e @ ClientError::Rpc { .. }) => {
                    eprintln!("{e}");
                    ExitCode::from(2)
                }
                Err(e @ ClientError::Digest { .. }) => {
                    eprintln!("steamcell: {e}");
                    ExitCode::from(3)
                }
                Err(e) => {
                    eprintln!("steamcell: {e}");
                    ExitCode::from(1)
                }
            }
        }
        Command::Get {
            quantity,
            pairs,
            units,
            unit,
        } => {
            init_logs("warn");
            let answer = steamcell::api::cell::pairs_from_args(&with_flags(pairs, units, unit))
                .and_then(|p| steamcell::api::cell::cell(&quantity, &p));
            match answer {
                Ok(text) => print_out(&text),
                Err(e) => {
                    eprintln!("{}", e.reason);
                    ExitCode::from(2)
                }
            }
        }
        Command::Site {
            file,
            quantity,
            pairs,
            units,
            unit,
        } => {
            init_logs("warn");
            match steamcell::api::site::from_file(&file, &quantity, &with_flags(pairs, units, unit))
            {
                Ok(text) => print_out(&text),
                Err(e) => {
                    eprintln!("{}", e.reason);
                    ExitCode::from(2)
                }
            }
        }
        Command::Validate {
            report,
            json,
            expect_digest,
        } => {
            init_logs("warn");
            validate(report.as_deref(), json.as_deref(), expect_digest.as_deref())
        }
        Command::Token {
            name,
            expires,
            methods,
            token_out,
        } => mint(&name, expires, methods, token_out.as_deref()),
        Command::Schema { out } => {
            init_logs("warn");
            let text = steamcell::api::openrpc::document_text();
            let written = if out == "-" {
                use std::io::Write;
                std::io::stdout().write_all(text.as_bytes())
            } else {
                std::path::Path::new(&out)
                    .parent()
                    .filter(|d| !d.as_os_str().is_empty())
                    .map_or(Ok(()), std::fs::create_dir_all)
                    .and_then(|()| std::fs::write(&out, text))
            };
            match written {
                Ok(()) => ExitCode::SUCCESS,
                Err(e) => {
                    eprintln!("steamcell: cannot write {out}: {e}");
                    ExitCode::from(1)
                }
            }
        }
    }
}

/// The name=value words with `--units` and `--unit` added as units= and unit=.
fn with_flags(mut pairs: Vec<String>, units: Option<String>, unit: Option<String>) -> Vec<String> {
    pairs.extend(units.map(|u| format!("units={u}")));
    pairs.extend(unit.map(|u| format!("unit={u}")));
    pairs
}

/// `steamcell validate`: writes the record where asked, prints the summary line.
fn validate(report: Option<&Path>, json: Option<&str>, expect: Option<&str>) -> ExitCode {
    use steamcell::api::record;
    let r = record::record();
    if let Some(path) = report {
        if let Err(e) = std::fs::write(path, record::to_html(&r)) {
            eprintln!("steamcell: cannot write {}: {e}", path.display());
            return ExitCode::from(1);
        }
    }
    match json {
        Some("-") => {
            let code = print_out(&record::to_json(&r));
            if code != ExitCode::SUCCESS {
                return code;
            }
        }
        Some(path) => {
            if let Err(e) = std::fs::write(path, record::to_json(&r)) {
                eprintln!("steamcell: cannot write {path}: {e}");
                return ExitCode::from(1);
            }
        }
        None => {}
    }
    let failed_trips = r.round_trips.iter().filter(|t| !t.passed).count();
    let failed_cmp = r.if97_vs_iapws95.iter().filter(|c| !c.passed).count();
    let summary = format!(
        "steamcell {} validation: {} of {} verification cases passed, {} of {} round-trip rows passed, {} of {} IF97-vs-IAPWS-95 rows within tolerance; digest {}",
        r.version,
        r.verification.passed,
        r.verification.cases.len(),
        r.round_trips.len() - failed_trips,
        r.round_trips.len(),
        r.if97_vs_iapws95.len() - failed_cmp,
        r.if97_vs_iapws95.len(),
        r.digest
    );
    // The summary goes to stderr when the JSON goes to stdout.
    if json == Some("-") {
        eprintln!("{summary}");
    } else {
        println!("{summary}");
    }
    if let Some(want) = expect {
        if want != r.digest {
            eprintln!(
                "steamcell: this build's validation digest {} is not the expected {want}",
                r.digest
            );
            return ExitCode::from(3);
        }
    }
    if r.passed {
        ExitCode::SUCCESS
    } else {
        eprintln!("steamcell: validation FAILED (see the record)");
        ExitCode::from(3)
    }
}

/// `steamcell token`: a new token and its tokens-file line.
fn mint(
    name: &str,
    expires: Option<String>,
    methods: Option<String>,
    out: Option<&Path>,
) -> ExitCode {
    use steamcell::api::tokens;
    let token = match tokens::mint() {
        Ok(t) => t,
        Err(e) => {
            eprintln!("steamcell: {e}");
            return ExitCode::from(1);
        }
    };
    let mut options = Vec::new();
    if let Some(x) = expires {
        options.push(format!("expires={x}"));
    }
    if let Some(m) = methods {
        options.push(format!("methods={m}"));
    }
    let line = tokens::file_line(name, &token, &options);
    // The line must be one the server accepts.
    if let Err(e) = tokens::Table::parse(&line) {
        eprintln!("steamcell: {}", e.trim_start_matches("line 1: "));
        return ExitCode::from(1);
    }
    match out {
        Some(path) => {
            if let Err(e) = write_private(path, &format!("{token}\n")) {
                eprintln!("steamcell: cannot write {}: {e}", path.display());
                return ExitCode::from(1);
            }
            print_out(&line)
        }
        None => {
            // The token goes to the terminal (stderr) and only the line to stdout, so that
            // `steamcell token NAME >> tokens` appends a line the server accepts.
            eprintln!("token for {name} (give it to them; it is kept nowhere): {token}");
            print_out(&line)
        }
    }
}

/// Writes `text` to a new file readable by its owner only (where permissions exist).
fn write_private(path: &Path, text: &str) -> std::io::Result<()> {
    use std::io::Write;
    let mut o = std::fs::OpenOptions::new();
    o.write(true).create_new(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        o.mode(0o600);
    }
    o.open(path)?.write_all(text.as_bytes())
}

/// Ends the process once standard input reaches its end (or fails): the parent that holds it
/// has closed it or is gone. Nothing is in flight that anyone still waits for.
fn stop_on_stdin_eof() {
    std::thread::spawn(|| {
        let _ = std::io::copy(&mut std::io::stdin().lock(), &mut std::io::sink());
        tracing::info!("standard input closed: stopping (--stop-on-stdin-eof)");
        std::process::exit(0);
    });
}

/// Prints a result line; a closed pipe (e.g. `| head`) ends quietly instead of panicking.
fn print_out(text: &str) -> ExitCode {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    match writeln!(out, "{text}").and_then(|_| out.flush()) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("steamcell: cannot write the result: {e}");
            ExitCode::from(1)
        }
    }
}
