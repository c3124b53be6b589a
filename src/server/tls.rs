//! TLS for `steamcell serve --tls-cert FILE --tls-key FILE` (rustls with the ring provider; no
//! OpenSSL): the server's certificate chain and key read from PEM files, HTTPS and WSS on the
//! listen port (ALPN `h2` and `http/1.1`), the certificate and key re-read on SIGHUP, and the
//! client side used by `steamcell call --url https://...` (roots from `--ca-file`, else the
//! system's trust store).
//!
//! A connection whose first byte is not a TLS handshake record (0x16) is plain text sent to the
//! TLS port: it is answered with a plain-HTTP 400 naming the https:// address and closed
//! ([`PLAIN_HTTP_ANSWER`]), and counted; a failed handshake is logged at `info` and counted.
//!
//! Invariant: a certificate or key that cannot be read or does not match refuses the start with
//! the file and the reason; a failed reload keeps the certificate in force.

use rustls::pki_types::pem::PemObject;
use rustls::pki_types::{CertificateDer, PrivateKeyDer};
use std::path::{Path, PathBuf};
use std::sync::{Arc, RwLock};

/// The certificate chain and key files of a TLS server.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TlsFiles {
    /// PEM file with the server's certificate, then any intermediate certificates.
    pub cert: PathBuf,
    /// PEM file with the private key (PKCS#8, PKCS#1 or SEC1).
    pub key: PathBuf,
}

fn provider() -> Arc<rustls::crypto::CryptoProvider> {
    Arc::new(rustls::crypto::ring::default_provider())
}

/// Reads the certificates of a PEM file (at least one).
pub fn read_certs(path: &Path, what: &str) -> Result<Vec<CertificateDer<'static>>, String> {
    let bytes = std::fs::read(path)
        .map_err(|e| format!("cannot read the {what} {}: {e}", path.display()))?;
    let certs: Vec<CertificateDer<'static>> = CertificateDer::pem_slice_iter(&bytes)
        .collect::<Result<_, _>>()
        .map_err(|e| format!("the {what} {} is not valid PEM: {e}", path.display()))?;
    if certs.is_empty() {
        return Err(format!(
            "the {what} {} holds no PEM certificate (-----BEGIN CERTIFICATE-----)",
            path.display()
        ));
    }
    Ok(certs)
}

/// The rustls server configuration of `files`.
pub fn server_config(files: &TlsFiles) -> Result<rustls::ServerConfig, String> {
    let certs = read_certs(&files.cert, "TLS certificate")?;
    let key_bytes = std::fs::read(&files.key)
        .map_err(|e| format!("cannot read the TLS key {}: {e}", files.key.display()))?;
    let key = PrivateKeyDer::from_pem_slice(&key_bytes).map_err(|e| {
        format!(
            "the TLS key {} holds no usable PEM private key: {e}",
            files.key.display()
        )
    })?;
    let mut config = rustls::ServerConfig::builder_with_provider(provider())
        .with_safe_default_protocol_versions()
        .map_err(|e| format!("TLS set-up failed: {e}"))?
        .with_no_client_auth()
        .with_single_cert(certs, key)
        .map_err(|e| {
            format!(
                "the TLS key {} does not go with the certificate {}: {e}",
                files.key.display(),
                files.cert.display()
            )
        })?;
    config.alpn_protocols = vec![b"h2".to_vec(), b"http/1.1".to_vec()];
    Ok(config)
}

/// The TLS acceptor of a running server, replaced on reload.
pub struct Tls {
    files: TlsFiles,
    acceptor: RwLock<tokio_rustls::TlsAcceptor>,
}

impl std::fmt::Debug for Tls {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Tls").field("files", &self.files).finish()
    }
}

impl Tls {
    /// Reads `files` now (the error names the file and the reason).
    pub fn load(files: &TlsFiles) -> Result<Tls, String> {
        let config = server_config(files)?;
        Ok(Tls {
            files: files.clone(),
            acceptor: RwLock::new(tokio_rustls::TlsAcceptor::from(Arc::new(config))),
        })
    }

    /// The acceptor in force.
    pub fn acceptor(&self) -> tokio_rustls::TlsAcceptor {
        self.acceptor
            .read()
            .unwrap_or_else(|e| e.into_inner())
            .clone()
    }

    /// Re-reads the certificate and key; on an error the ones in force stay.
    pub fn reload(&self) -> Result<(), String> {
        let config = server_config(&self.files)?;
        *self.acceptor.write().unwrap_or_else(|e| e.into_inner()) =
            tokio_rustls::TlsAcceptor::from(Arc::new(config));
        Ok(())
    }
}

/// The answer to plain text sent to the TLS port (`{addr}` is replaced by the listen address).
pub const PLAIN_HTTP_ANSWER: &str =
    "this steamcell server speaks HTTPS only: use https://{addr}/ (or wss:// for WebSocket)";

/// The first byte of a TLS connection (a handshake record).
pub const HANDSHAKE_RECORD: u8 = 0x16;

/// A client configuration trusting the certificates of `ca_file` (PEM), or, without one, the
/// system's trust store (and `SSL_CERT_FILE` / `SSL_CERT_DIR`).
pub fn client_config(ca_file: Option<&Path>) -> Result<rustls::ClientConfig, String> {
    let mut roots = rustls::RootCertStore::empty();
    match ca_file {
        Some(path) => {
            for c in read_certs(path, "CA file")? {
                roots
                    .add(c)
                    .map_err(|e| format!("the CA file {}: {e}", path.display()))?;
            }
        }
        None => {
            let found = rustls_native_certs::load_native_certs();
            for c in found.certs {
                let _ = roots.add(c);
            }
            if roots.is_empty() {
                return Err(
                    "no trusted certificate found in the system's trust store: give --ca-file"
                        .to_string(),
                );
            }
        }
    }
    rustls::ClientConfig::builder_with_provider(provider())
        .with_safe_default_protocol_versions()
        .map_err(|e| format!("TLS set-up failed: {e}"))
        .map(|b| b.with_root_certificates(roots).with_no_client_auth())
}
