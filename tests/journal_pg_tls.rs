//! TLS to the journal server with libpq's meaning of `sslmode`: `require` encrypts whatever
//! the certificate, `disable` does not encrypt, `verify-full` checks the certificate against
//! the system's and `sslrootcert`'s (and refuses one it cannot trust), an unknown mode is an
//! error. The test server (`.ci/pg-cluster`) has TLS with a certificate of its own making;
//! `SPLITDESK_TEST_PG_ROOTCERT` names it.
//
// Source: PostgreSQL 15 manual, table 34.1 "SSL Mode Descriptions" (what each sslmode
// protects against) and section 34.19.1 (sslrootcert).

#[path = "pg_support/mod.rs"]
mod pg_support;

use splitdesk::journal::{Journal, JournalError};

/// A fresh database's address with `params` added, and the server's certificate file.
fn server(tag: &str) -> Option<(String, String)> {
    let url = pg_support::fresh_database(tag)?;
    match std::env::var("SPLITDESK_TEST_PG_ROOTCERT") {
        Ok(cert) if !cert.is_empty() => Some((url, cert)),
        _ => {
            assert!(
                std::env::var("CI").as_deref() != Ok("true"),
                "CI=true: the TLS tests need SPLITDESK_TEST_PG_ROOTCERT (see .ci/pg-cluster)"
            );
            eprintln!("skipped: PostgreSQL TLS tests (no SPLITDESK_TEST_PG_ROOTCERT)");
            pg_support::drop_database(&url);
            None
        }
    }
}

fn with(url: &str, params: &str) -> String {
    let sep = if url.contains('?') { '&' } else { '?' };
    format!("{url}{sep}{params}")
}

#[test]
fn sslmode_is_read_as_the_server_s_own_tools_read_it() {
    let Some((url, cert)) = server("pg_tls") else {
        return;
    };
    // The default (prefer) and require: encrypted, the self-made certificate taken.
    for u in [url.clone(), with(&url, "sslmode=require")] {
        let j = Journal::open_url(&u).unwrap();
        assert_eq!(j.server_tls().unwrap(), Some(true), "{u}");
    }
    // disable: in the clear.
    let j = Journal::open_url(&with(&url, "sslmode=disable")).unwrap();
    assert_eq!(j.server_tls().unwrap(), Some(false));
    // verify-full and verify-ca with the certificate named: encrypted and checked.
    for mode in ["verify-full", "verify-ca"] {
        let u = with(&url, &format!("sslmode={mode}&sslrootcert={cert}"));
        let j = Journal::open_url(&u).unwrap();
        assert_eq!(j.server_tls().unwrap(), Some(true), "{mode}");
    }
    // verify-full without it: the certificate cannot be trusted, no connection.
    match Journal::open_url(&with(&url, "sslmode=verify-full")) {
        Err(JournalError::Connect { detail, .. }) => {
            assert!(
                detail.to_lowercase().contains("certificate"),
                "the refusal names the certificate: {detail}"
            );
        }
        Err(other) => panic!("{other:?}"),
        Ok(_) => panic!("verify-full trusted a certificate it had no reason to"),
    }
    // An sslmode the server's tools do not know is an error, said plainly.
    match Journal::open_url(&with(&url, "sslmode=sometimes")) {
        Err(e) => assert!(
            e.to_string().contains("sslmode=sometimes is not one of"),
            "{e}"
        ),
        Ok(_) => panic!("an unknown sslmode was accepted"),
    }
    pg_support::drop_database(&url);
}
