//! TLS to the journal server with libpq's meaning of `sslmode`, which the client library
//! does not know in full:
//!
//! - `disable`: no TLS; `allow`, `prefer` (the default): TLS when the server offers it;
//!   `require`: TLS or no connection. In these modes the connection is encrypted but the
//!   server's certificate is not checked, as with libpq (a club server often has a
//!   certificate of its own making).
//! - `verify-ca`: TLS, and the certificate must chain to a trusted one; `verify-full`: also
//!   for the host name in the address. Trusted are the system's certificates and those of
//!   the PEM file `sslrootcert` names.
//!
// Source: PostgreSQL 15 manual, section 34.19.1 "Client Verification of Server
// Certificates" and table 34.1 "SSL Mode Descriptions".

use std::path::PathBuf;
use std::sync::Arc;

use rustls::client::danger::{HandshakeSignatureValid, ServerCertVerified, ServerCertVerifier};
use rustls::client::WebPkiServerVerifier;
use rustls::crypto::CryptoProvider;
use rustls::pki_types::{CertificateDer, ServerName, UnixTime};
use rustls::{CertificateError, DigitallySignedStruct, SignatureScheme};

/// How the address asks for TLS.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SslMode {
    Disable,
    Allow,
    Prefer,
    Require,
    VerifyCa,
    VerifyFull,
}

/// The address with the TLS parameters taken out (for the client library), the mode they
/// ask for and the trusted-certificate file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TlsAsk {
    pub url: String,
    pub mode: SslMode,
    pub root_cert: Option<PathBuf>,
}

/// Read `sslmode` and `sslrootcert` from the address's parameters; the address passed on
/// keeps `sslmode` as the client library knows it (`disable`, `prefer` or `require`).
pub fn split(url: &str) -> Result<TlsAsk, String> {
    let (base, query) = match url.split_once('?') {
        Some((b, q)) => (b, q),
        None => (url, ""),
    };
    let mut mode = SslMode::Prefer;
    let mut root_cert = None;
    let mut kept = Vec::new();
    for kv in query.split('&').filter(|kv| !kv.is_empty()) {
        let (k, v) = kv.split_once('=').unwrap_or((kv, ""));
        match k {
            "sslmode" => {
                mode = match v {
                    "disable" => SslMode::Disable,
                    "allow" => SslMode::Allow,
                    "prefer" => SslMode::Prefer,
                    "require" => SslMode::Require,
                    "verify-ca" => SslMode::VerifyCa,
                    "verify-full" => SslMode::VerifyFull,
                    other => {
                        return Err(format!(
                            "sslmode={other} is not one of disable, allow, prefer, require, \
                             verify-ca, verify-full"
                        ))
                    }
                }
            }
            "sslrootcert" => root_cert = Some(PathBuf::from(percent_decode(v))),
            _ => kept.push(kv),
        }
    }
    let passed = match mode {
        SslMode::Disable => "disable",
        SslMode::Allow | SslMode::Prefer => "prefer",
        SslMode::Require | SslMode::VerifyCa | SslMode::VerifyFull => "require",
    };
    kept.push(match passed {
        "disable" => "sslmode=disable",
        "prefer" => "sslmode=prefer",
        _ => "sslmode=require",
    });
    Ok(TlsAsk {
        url: format!("{base}?{}", kept.join("&")),
        mode,
        root_cert,
    })
}

/// `%XX` escapes of a URL parameter value decoded (a path may hold them).
fn percent_decode(v: &str) -> String {
    let bytes = v.as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        let hex = |b: u8| char::from(b).to_digit(16);
        match (bytes.get(i), bytes.get(i + 1), bytes.get(i + 2)) {
            (Some(b'%'), Some(&h), Some(&l)) if hex(h).is_some() && hex(l).is_some() => {
                out.push((hex(h).unwrap_or(0) * 16 + hex(l).unwrap_or(0)) as u8);
                i += 3;
            }
            (Some(&b), _, _) => {
                out.push(b);
                i += 1;
            }
            _ => break,
        }
    }
    String::from_utf8_lossy(&out).into_owned()
}

/// The TLS connector for the mode asked.
pub fn connector(ask: &TlsAsk) -> Result<tokio_postgres_rustls::MakeRustlsConnect, String> {
    let provider = Arc::new(rustls::crypto::ring::default_provider());
    let verifier: Arc<dyn ServerCertVerifier> = match ask.mode {
        SslMode::VerifyCa | SslMode::VerifyFull => {
            let mut roots = rustls::RootCertStore::empty();
            for cert in rustls_native_certs::load_native_certs().certs {
                // A system certificate the TLS library cannot use is left out.
                let _ = roots.add(cert);
            }
            if let Some(path) = &ask.root_cert {
                use rustls::pki_types::pem::PemObject;
                let certs = CertificateDer::pem_file_iter(path)
                    .map_err(|e| format!("sslrootcert {}: {e}", path.display()))?;
                for cert in certs {
                    let cert = cert.map_err(|e| format!("sslrootcert {}: {e}", path.display()))?;
                    roots
                        .add(cert)
                        .map_err(|e| format!("sslrootcert {}: {e}", path.display()))?;
                }
            }
            let webpki = WebPkiServerVerifier::builder_with_provider(
                Arc::new(roots),
                provider.clone(),
            )
            .build()
            .map_err(|e| {
                format!("no trusted certificate to verify the server with ({e}); set sslrootcert")
            })?;
            if ask.mode == SslMode::VerifyFull {
                webpki
            } else {
                Arc::new(ChainOnly(webpki))
            }
        }
        _ => Arc::new(EncryptOnly(provider.clone())),
    };
    let config = rustls::ClientConfig::builder_with_provider(provider)
        .with_safe_default_protocol_versions()
        .map_err(|e| format!("TLS: {e}"))?
        .dangerous()
        .with_custom_certificate_verifier(verifier)
        .with_no_client_auth();
    Ok(tokio_postgres_rustls::MakeRustlsConnect::new(config))
}

/// `verify-ca`: the chain is checked, the host name is not.
#[derive(Debug)]
struct ChainOnly(Arc<WebPkiServerVerifier>);

impl ServerCertVerifier for ChainOnly {
    fn verify_server_cert(
        &self,
        end_entity: &CertificateDer<'_>,
        intermediates: &[CertificateDer<'_>],
        server_name: &ServerName<'_>,
        ocsp: &[u8],
        now: UnixTime,
    ) -> Result<ServerCertVerified, rustls::Error> {
        match self
            .0
            .verify_server_cert(end_entity, intermediates, server_name, ocsp, now)
        {
            Err(rustls::Error::InvalidCertificate(
                CertificateError::NotValidForName | CertificateError::NotValidForNameContext { .. },
            )) => Ok(ServerCertVerified::assertion()),
            other => other,
        }
    }

    fn verify_tls12_signature(
        &self,
        message: &[u8],
        cert: &CertificateDer<'_>,
        dss: &DigitallySignedStruct,
    ) -> Result<HandshakeSignatureValid, rustls::Error> {
        self.0.verify_tls12_signature(message, cert, dss)
    }

    fn verify_tls13_signature(
        &self,
        message: &[u8],
        cert: &CertificateDer<'_>,
        dss: &DigitallySignedStruct,
    ) -> Result<HandshakeSignatureValid, rustls::Error> {
        self.0.verify_tls13_signature(message, cert, dss)
    }

    fn supported_verify_schemes(&self) -> Vec<SignatureScheme> {
        self.0.supported_verify_schemes()
    }
}

/// `prefer`/`require`: encrypted, the certificate taken as it comes (libpq's meaning);
/// the handshake's signatures are still checked.
#[derive(Debug)]
struct EncryptOnly(Arc<CryptoProvider>);

impl ServerCertVerifier for EncryptOnly {
    fn verify_server_cert(
        &self,
        _end_entity: &CertificateDer<'_>,
        _intermediates: &[CertificateDer<'_>],
        _server_name: &ServerName<'_>,
        _ocsp: &[u8],
        _now: UnixTime,
    ) -> Result<ServerCertVerified, rustls::Error> {
        Ok(ServerCertVerified::assertion())
    }

    fn verify_tls12_signature(
        &self,
        message: &[u8],
        cert: &CertificateDer<'_>,
        dss: &DigitallySignedStruct,
    ) -> Result<HandshakeSignatureValid, rustls::Error> {
        rustls::crypto::verify_tls12_signature(
            message,
            cert,
            dss,
            &self.0.signature_verification_algorithms,
        )
    }

    fn verify_tls13_signature(
        &self,
        message: &[u8],
        cert: &CertificateDer<'_>,
        dss: &DigitallySignedStruct,
    ) -> Result<HandshakeSignatureValid, rustls::Error> {
        rustls::crypto::verify_tls13_signature(
            message,
            cert,
            dss,
            &self.0.signature_verification_algorithms,
        )
    }

    fn supported_verify_schemes(&self) -> Vec<SignatureScheme> {
        self.0.signature_verification_algorithms.supported_schemes()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_tls_parameters_are_read_libpq_s_way() {
        let ask = split(
            "postgres://c@h/j?sslmode=verify-full&sslrootcert=%2Fetc%2Fca.pem&connect_timeout=5",
        )
        .unwrap();
        assert_eq!(ask.mode, SslMode::VerifyFull);
        assert_eq!(ask.root_cert, Some(PathBuf::from("/etc/ca.pem")));
        assert_eq!(
            ask.url,
            "postgres://c@h/j?connect_timeout=5&sslmode=require"
        );
        let ask = split("postgres://c@h/j").unwrap();
        assert_eq!(ask.mode, SslMode::Prefer);
        assert_eq!(ask.url, "postgres://c@h/j?sslmode=prefer");
        assert_eq!(
            split("postgres://c@h/j?sslmode=allow").unwrap().url,
            "postgres://c@h/j?sslmode=prefer"
        );
        assert_eq!(
            split("postgres://c@h/j?sslmode=disable").unwrap().mode,
            SslMode::Disable
        );
        assert!(split("postgres://c@h/j?sslmode=sometimes")
            .unwrap_err()
            .contains("sslmode=sometimes"));
    }
}
