//! HTTPS for `groundproof serve --tls-cert --tls-key`: rustls (with the
//! `ring` provider, no C toolchain beyond `cc`) reads a PEM certificate
//! chain and its private key. The field app needs a secure context on a
//! phone (service worker, camera, location, WebCrypto); a station uses its
//! organisation's certificate, or one from a local certificate authority
//! installed on the phones (README). TLS 1.2 and 1.3, rustls's defaults.

use crate::error::{Error, Result};
use rustls::pki_types::pem::PemObject;
use rustls::pki_types::{CertificateDer, PrivateKeyDer};
use std::path::Path;

/// Largest PEM file read (a chain of a few certificates is a few kB).
const MAX_PEM_BYTES: u64 = 1 << 20;

fn read_pem(path: &Path, what: &str) -> Result<Vec<u8>> {
    let len = std::fs::metadata(path)
        .map_err(|e| Error::io(format!("reading the {what} {}", path.display()), e))?
        .len();
    if len > MAX_PEM_BYTES {
        return Err(Error::Invalid(format!(
            "the {what} {} is {len} bytes; a PEM file is at most {MAX_PEM_BYTES}",
            path.display()
        )));
    }
    std::fs::read(path).map_err(|e| Error::io(format!("reading the {what} {}", path.display()), e))
}

/// The server's TLS settings from a PEM certificate chain (leaf first) and
/// a PEM private key (PKCS#8, PKCS#1 or SEC1); every fault names the file.
pub fn tls_config(cert: &Path, key: &Path) -> Result<rustls::ServerConfig> {
    let cert_pem = read_pem(cert, "certificate")?;
    let chain = CertificateDer::pem_slice_iter(&cert_pem)
        .collect::<std::result::Result<Vec<_>, _>>()
        .map_err(|e| Error::Invalid(format!("{}: not a PEM certificate: {e}", cert.display())))?;
    if chain.is_empty() {
        return Err(Error::Invalid(format!(
            "{}: no certificate (expected -----BEGIN CERTIFICATE-----)",
            cert.display()
        )));
    }
    let key_pem = read_pem(key, "private key")?;
    let key_der = PrivateKeyDer::from_pem_slice(&key_pem)
        .map_err(|e| Error::Invalid(format!("{}: not a PEM private key: {e}", key.display())))?;
    rustls::ServerConfig::builder_with_provider(rustls::crypto::ring::default_provider().into())
        .with_safe_default_protocol_versions()
        .map_err(|e| Error::Internal(format!("TLS versions: {e}")))?
        .with_no_client_auth()
        .with_single_cert(chain, key_der)
        .map_err(|e| {
            Error::Invalid(format!(
                "{} and {} do not make a TLS identity: {e}",
                cert.display(),
                key.display()
            ))
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn faults_name_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let cert = dir.path().join("cert.pem");
        let key = dir.path().join("key.pem");
        std::fs::write(&cert, "not a certificate").unwrap();
        std::fs::write(&key, "not a key").unwrap();
        let e = tls_config(&cert, &key).unwrap_err().to_string();
        assert!(
            e.contains("cert.pem") && e.contains("no certificate"),
            "{e}"
        );
        let e = tls_config(&dir.path().join("missing.pem"), &key)
            .unwrap_err()
            .to_string();
        assert!(e.contains("missing.pem"), "{e}");
    }
}
