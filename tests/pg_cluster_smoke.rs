//! The chain the PostgreSQL journal tests stand on: `SPLITDESK_TEST_PG_URL` (from
//! `.ci/pg-cluster`), the password from the password file, a fresh database per test.
//! Skipped with a message without a server, except under `CI=true`.

mod pg_support;

use pg_support::{
    connect, database_name, drop_database, fresh_database, is_plain_name, split_fields,
    with_database,
};

#[test]
fn a_fresh_database_answers_and_is_dropped() {
    let Some(url) = fresh_database("smoke") else {
        return;
    };
    // The URL handed to a test never carries the password.
    let password = std::env::var("PGPASSWORD").ok().filter(|p| !p.is_empty());
    if let Some(password) = password {
        assert!(!url.contains(&password));
    }
    let mut client = connect(&url).unwrap();
    let row = client
        .query_one("SELECT 1::int4, current_database()", &[])
        .unwrap();
    assert_eq!(row.get::<_, i32>(0), 1);
    let name: String = row.get(1);
    assert!(name.starts_with("sdtest_smoke_"), "{name}");
    assert!(url.ends_with(&format!("/{name}")), "{url}");
    // Empty: nothing of an earlier test is in it.
    let tables: i64 = client
        .query_one(
            "SELECT count(*) FROM information_schema.tables WHERE table_schema = 'public'",
            &[],
        )
        .unwrap()
        .get(0);
    assert_eq!(tables, 0);
    drop(client);

    drop_database(&url);
    let server = pg_support::server_url().unwrap();
    let mut admin = connect(&server).unwrap();
    let left: i64 = admin
        .query_one(
            "SELECT count(*) FROM pg_database WHERE datname = $1",
            &[&name],
        )
        .unwrap()
        .get(0);
    assert_eq!(left, 0, "{name} is still there after drop_database");
}

#[test]
fn two_fresh_databases_are_distinct() {
    let (Some(a), Some(b)) = (fresh_database("twice"), fresh_database("twice")) else {
        return;
    };
    assert_ne!(a, b);
    drop_database(&a);
    drop_database(&b);
}

#[test]
fn database_url_replaces_the_path_only() {
    assert_eq!(
        with_database("postgres://sd@127.0.0.1:54329/postgres", "x"),
        "postgres://sd@127.0.0.1:54329/x"
    );
    assert_eq!(
        with_database("postgres://sd@h:1/postgres?sslmode=disable", "x"),
        "postgres://sd@h:1/x?sslmode=disable"
    );
    assert_eq!(
        with_database("postgres://sd@h:1", "x"),
        "postgres://sd@h:1/x"
    );
    assert_eq!(
        with_database("postgresql://sd@h?connect_timeout=5", "x"),
        "postgresql://sd@h/x?connect_timeout=5"
    );
    assert_eq!(
        with_database("host=h user=sd dbname=postgres", "x"),
        "host=h user=sd dbname=postgres dbname=x"
    );
}

#[test]
fn database_names_are_plain_and_distinct() {
    let a = database_name("Journal Concurrency/PG-1 with a very long tag indeed");
    let b = database_name("Journal Concurrency/PG-1 with a very long tag indeed");
    assert_ne!(a, b);
    assert!(a.starts_with("sdtest_journal_concurrency_pg_1_"), "{a}");
    assert!(a.len() <= 63 && is_plain_name(&a), "{a}");
}

#[test]
fn password_file_fields_unescape() {
    // Source: PostgreSQL 15 manual, section 34.16 "The Password File" (`\` escapes `:`
    // and `\`).
    assert_eq!(
        split_fields("h:1:d\\:b:u:p\\\\w"),
        ["h", "1", "d:b", "u", "p\\w"]
    );
}
