//! The journal's engine-neutral SQL layer: one way to run a statement and read its rows on
//! either engine, SQLite (the single coach's file) or PostgreSQL (a staff's server).
//!
//! Statements are written once, in the SQL both engines speak, with numbered parameters
//! `?1`, `?2`, … (SQLite's form); for PostgreSQL they become `$1`, `$2`, … Values cross the
//! boundary as [`Param`]s and come back through [`Row::get`], so the journal's code never
//! names either client library. A few statements differ by engine (the schema, integrity
//! checks, the backup); those branch on [`Engine`] in the journal itself.

use std::collections::HashMap;
use std::path::Path;

use postgres::types::{IsNull, ToSql, Type};

use super::{JournalError, Result};

/// Which database engine holds the journal.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Engine {
    /// One SQLite file (the default, for a single coach).
    Sqlite,
    /// A PostgreSQL database shared by a coaching staff.
    Postgres,
}

/// A value bound to a statement parameter.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Value {
    Null,
    Int(i64),
    Real(f64),
    Text(String),
}

/// Anything that can be bound to a statement parameter.
pub(crate) trait Param {
    fn value(&self) -> Value;
}

macro_rules! int_param {
    ($($t:ty),*) => {$(
        impl Param for $t {
            fn value(&self) -> Value {
                match i64::try_from(*self) {
                    Ok(v) => Value::Int(v),
                    // Larger than any count or time the journal keeps: stored as missing.
                    Err(_) => Value::Null,
                }
            }
        }
    )*};
}
int_param!(i64, i32, u32, u8, u64, usize);

impl Param for f64 {
    fn value(&self) -> Value {
        Value::Real(*self)
    }
}

impl Param for bool {
    fn value(&self) -> Value {
        Value::Int(i64::from(*self))
    }
}

impl Param for str {
    fn value(&self) -> Value {
        Value::Text(self.to_string())
    }
}

impl Param for String {
    fn value(&self) -> Value {
        Value::Text(self.clone())
    }
}

impl Param for std::borrow::Cow<'_, str> {
    fn value(&self) -> Value {
        Value::Text(self.to_string())
    }
}

impl<T: Param + ?Sized> Param for &T {
    fn value(&self) -> Value {
        (**self).value()
    }
}

impl<T: Param> Param for Option<T> {
    fn value(&self) -> Value {
        match self {
            Some(v) => v.value(),
            None => Value::Null,
        }
    }
}

impl Param for Cell {
    fn value(&self) -> Value {
        match self {
            Cell::Null => Value::Null,
            Cell::Int(n) => Value::Int(*n),
            Cell::Real(x) => Value::Real(*x),
            Cell::Text(s) => Value::Text(s.clone()),
            // Bytes only come from a damaged text column: kept as text, damage replaced.
            Cell::Bytes(b) => Value::Text(String::from_utf8_lossy(b).into_owned()),
        }
    }
}

/// The parameters of one statement, in order (`?1` first).
pub(crate) type Params<'a> = &'a [&'a dyn Param];

/// One row of a result, read by column number.
pub(crate) enum Row<'a> {
    Sqlite(&'a rusqlite::Row<'a>, &'a Path),
    Postgres(&'a postgres::Row, &'a Path),
}

/// A column value as read, before conversion.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Cell {
    Null,
    Int(i64),
    Real(f64),
    /// Text that is valid UTF-8.
    Text(String),
    /// Bytes: a blob, or text that is not valid UTF-8 (a damaged row).
    Bytes(Vec<u8>),
}

impl Row<'_> {
    fn path(&self) -> &Path {
        match self {
            Row::Sqlite(_, p) | Row::Postgres(_, p) => p,
        }
    }

    /// The raw value of column `i`.
    pub(crate) fn cell(&self, i: usize) -> Result<Cell> {
        match self {
            Row::Sqlite(r, path) => {
                use rusqlite::types::ValueRef;
                let v = r.get_ref(i).map_err(|e| JournalError::sql(path, e))?;
                Ok(match v {
                    ValueRef::Null => Cell::Null,
                    ValueRef::Integer(n) => Cell::Int(n),
                    ValueRef::Real(x) => Cell::Real(x),
                    ValueRef::Text(b) => match std::str::from_utf8(b) {
                        Ok(s) => Cell::Text(s.to_string()),
                        Err(_) => Cell::Bytes(b.to_vec()),
                    },
                    ValueRef::Blob(b) => Cell::Bytes(b.to_vec()),
                })
            }
            Row::Postgres(r, path) => pg_cell(r, i, path),
        }
    }

    /// Column `i` as `T`; a value of another type is a [`JournalError::BadValue`].
    pub(crate) fn get<T: FromCell>(&self, i: usize) -> Result<T> {
        let cell = self.cell(i)?;
        T::from_cell(&cell).ok_or_else(|| JournalError::BadValue {
            path: self.path().to_path_buf(),
            detail: format!("column {i}: expected {}, found {cell:?}", T::WHAT),
        })
    }

    /// Column `i` as `T` when it is one; `None` when missing or of another type (the
    /// analysis cache is derived data: a damaged value is a miss, never an error).
    pub(crate) fn lenient<T: FromCell>(&self, i: usize) -> Option<T> {
        self.cell(i).ok().and_then(|c| T::from_cell(&c))
    }

    /// Column `i` as text when it is UTF-8 text or bytes that are UTF-8; `None` otherwise.
    pub(crate) fn text(&self, i: usize) -> Option<String> {
        match self.cell(i).ok()? {
            Cell::Text(s) => Some(s),
            Cell::Bytes(b) => String::from_utf8(b).ok(),
            _ => None,
        }
    }

    /// Column `i` as text, damaged bytes replaced, anything else empty.
    pub(crate) fn text_lossy(&self, i: usize) -> Result<String> {
        Ok(match self.cell(i)? {
            Cell::Text(s) => s,
            Cell::Bytes(b) => String::from_utf8_lossy(&b).into_owned(),
            _ => String::new(),
        })
    }
}

fn pg_cell(r: &postgres::Row, i: usize, path: &Path) -> Result<Cell> {
    let bad = |detail: String| JournalError::BadValue {
        path: path.to_path_buf(),
        detail,
    };
    let Some(col) = r.columns().get(i) else {
        return Err(bad(format!("no column {i}")));
    };
    let ty = col.type_().clone();
    let err = |e: postgres::Error| bad(format!("column {i}: {e}"));
    let cell = if ty == Type::INT8 {
        r.try_get::<_, Option<i64>>(i).map_err(err)?.map(Cell::Int)
    } else if ty == Type::INT4 {
        r.try_get::<_, Option<i32>>(i)
            .map_err(err)?
            .map(|v| Cell::Int(v.into()))
    } else if ty == Type::INT2 {
        r.try_get::<_, Option<i16>>(i)
            .map_err(err)?
            .map(|v| Cell::Int(v.into()))
    } else if ty == Type::BOOL {
        r.try_get::<_, Option<bool>>(i)
            .map_err(err)?
            .map(|v| Cell::Int(v.into()))
    } else if ty == Type::FLOAT8 {
        r.try_get::<_, Option<f64>>(i).map_err(err)?.map(Cell::Real)
    } else if ty == Type::FLOAT4 {
        r.try_get::<_, Option<f32>>(i)
            .map_err(err)?
            .map(|v| Cell::Real(v.into()))
    } else if ty == Type::BYTEA {
        r.try_get::<_, Option<Vec<u8>>>(i)
            .map_err(err)?
            .map(Cell::Bytes)
    } else {
        r.try_get::<_, Option<String>>(i)
            .map_err(err)?
            .map(Cell::Text)
    };
    Ok(cell.unwrap_or(Cell::Null))
}

/// A Rust type a column converts to.
pub(crate) trait FromCell: Sized {
    const WHAT: &'static str;
    fn from_cell(c: &Cell) -> Option<Self>;
}

impl FromCell for i64 {
    const WHAT: &'static str = "an integer";
    fn from_cell(c: &Cell) -> Option<Self> {
        match c {
            Cell::Int(n) => Some(*n),
            _ => None,
        }
    }
}

macro_rules! narrow_int {
    ($($t:ty),*) => {$(
        impl FromCell for $t {
            const WHAT: &'static str = "a non-negative integer in range";
            fn from_cell(c: &Cell) -> Option<Self> {
                match c {
                    Cell::Int(n) => <$t>::try_from(*n).ok(),
                    _ => None,
                }
            }
        }
    )*};
}
narrow_int!(u32, u8, u64);

impl FromCell for f64 {
    const WHAT: &'static str = "a number";
    fn from_cell(c: &Cell) -> Option<Self> {
        match c {
            Cell::Real(x) => Some(*x),
            Cell::Int(n) => Some(*n as f64),
            _ => None,
        }
    }
}

impl FromCell for bool {
    const WHAT: &'static str = "a truth value";
    fn from_cell(c: &Cell) -> Option<Self> {
        match c {
            Cell::Int(n) => Some(*n != 0),
            _ => None,
        }
    }
}

impl FromCell for String {
    const WHAT: &'static str = "text";
    fn from_cell(c: &Cell) -> Option<Self> {
        match c {
            Cell::Text(s) => Some(s.clone()),
            _ => None,
        }
    }
}

impl<T: FromCell> FromCell for Option<T> {
    const WHAT: &'static str = T::WHAT;
    fn from_cell(c: &Cell) -> Option<Self> {
        match c {
            Cell::Null => Some(None),
            other => T::from_cell(other).map(Some),
        }
    }
}

/// Runs statements: a connection or a transaction of either engine.
pub(crate) trait Sql {
    /// The engine behind this connection.
    fn engine(&self) -> Engine;

    /// Run a statement that returns no rows; the number of rows it changed.
    fn exec(&mut self, path: &Path, sql: &str, params: Params<'_>) -> Result<u64>;

    /// Run a query and hand each row to `f`, in order, until `f` fails.
    fn each(
        &mut self,
        path: &Path,
        sql: &str,
        params: Params<'_>,
        f: &mut dyn FnMut(&Row<'_>) -> Result<()>,
    ) -> Result<()>;
}

impl dyn Sql + '_ {
    /// Every row of a query, converted by `f`.
    pub(crate) fn query<T>(
        &mut self,
        path: &Path,
        sql: &str,
        params: Params<'_>,
        mut f: impl FnMut(&Row<'_>) -> Result<T>,
    ) -> Result<Vec<T>> {
        let mut out = Vec::new();
        self.each(path, sql, params, &mut |r| {
            out.push(f(r)?);
            Ok(())
        })?;
        Ok(out)
    }

    /// The first row of a query, converted by `f`; `None` when there is none.
    pub(crate) fn query_opt<T>(
        &mut self,
        path: &Path,
        sql: &str,
        params: Params<'_>,
        f: impl FnOnce(&Row<'_>) -> Result<T>,
    ) -> Result<Option<T>> {
        let mut f = Some(f);
        let mut out = None;
        self.each(path, sql, params, &mut |r| {
            if let Some(f) = f.take() {
                out = Some(f(r)?);
            }
            Ok(())
        })?;
        Ok(out)
    }

    /// The first row of a query, which must exist.
    pub(crate) fn query_one<T>(
        &mut self,
        path: &Path,
        sql: &str,
        params: Params<'_>,
        f: impl FnOnce(&Row<'_>) -> Result<T>,
    ) -> Result<T> {
        self.query_opt(path, sql, params, f)?
            .ok_or_else(|| JournalError::BadValue {
                path: path.to_path_buf(),
                detail: "a query that always returns a row returned none".into(),
            })
    }
}

// ----- SQLite -----

/// A SQLite connection or transaction (a transaction dereferences to its connection).
pub(crate) struct Lite<'c>(pub(crate) &'c rusqlite::Connection);

fn lite_params(params: Params<'_>) -> Vec<rusqlite::types::Value> {
    use rusqlite::types::Value as V;
    params
        .iter()
        .map(|p| match p.value() {
            Value::Null => V::Null,
            Value::Int(n) => V::Integer(n),
            Value::Real(x) => V::Real(x),
            Value::Text(s) => V::Text(s),
        })
        .collect()
}

impl Sql for Lite<'_> {
    fn engine(&self) -> Engine {
        Engine::Sqlite
    }

    fn exec(&mut self, path: &Path, sql: &str, params: Params<'_>) -> Result<u64> {
        let mut stmt = self
            .0
            .prepare_cached(sql)
            .map_err(|e| JournalError::sql(path, e))?;
        let n = stmt
            .execute(rusqlite::params_from_iter(lite_params(params)))
            .map_err(|e| JournalError::sql(path, e))?;
        Ok(n as u64)
    }

    fn each(
        &mut self,
        path: &Path,
        sql: &str,
        params: Params<'_>,
        f: &mut dyn FnMut(&Row<'_>) -> Result<()>,
    ) -> Result<()> {
        let mut stmt = self
            .0
            .prepare_cached(sql)
            .map_err(|e| JournalError::sql(path, e))?;
        let mut rows = stmt
            .query(rusqlite::params_from_iter(lite_params(params)))
            .map_err(|e| JournalError::sql(path, e))?;
        while let Some(r) = rows.next().map_err(|e| JournalError::sql(path, e))? {
            f(&Row::Sqlite(r, path))?;
        }
        Ok(())
    }
}

// ----- PostgreSQL -----

/// Rewrite `?N` parameters as `$N`, leaving quoted text, quoted names and comments alone.
pub(crate) fn to_postgres(sql: &str) -> String {
    let mut out = String::with_capacity(sql.len());
    let mut chars = sql.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\'' | '"' => {
                out.push(c);
                for d in chars.by_ref() {
                    out.push(d);
                    if d == c {
                        break;
                    }
                }
            }
            '-' if chars.peek() == Some(&'-') => {
                out.push(c);
                for d in chars.by_ref() {
                    out.push(d);
                    if d == '\n' {
                        break;
                    }
                }
            }
            '?' if chars.peek().is_some_and(char::is_ascii_digit) => out.push('$'),
            _ => out.push(c),
        }
    }
    out
}

impl ToSql for Value {
    fn to_sql(
        &self,
        ty: &Type,
        out: &mut postgres::types::private::BytesMut,
    ) -> std::result::Result<IsNull, Box<dyn std::error::Error + Sync + Send>> {
        let mismatch = || -> Box<dyn std::error::Error + Sync + Send> {
            format!("cannot bind {self:?} to a parameter of type {ty}").into()
        };
        match self {
            Value::Null => Ok(IsNull::Yes),
            Value::Int(n) => {
                if *ty == Type::INT8 {
                    n.to_sql(ty, out)
                } else if *ty == Type::INT4 {
                    i32::try_from(*n).map_err(|_| mismatch())?.to_sql(ty, out)
                } else if *ty == Type::INT2 {
                    i16::try_from(*n).map_err(|_| mismatch())?.to_sql(ty, out)
                } else if *ty == Type::FLOAT8 {
                    (*n as f64).to_sql(ty, out)
                } else if *ty == Type::BOOL {
                    (*n != 0).to_sql(ty, out)
                } else if *ty == Type::TEXT || *ty == Type::VARCHAR || *ty == Type::UNKNOWN {
                    n.to_string().to_sql(&Type::TEXT, out)
                } else {
                    Err(mismatch())
                }
            }
            Value::Real(x) => {
                if *ty == Type::FLOAT8 {
                    x.to_sql(ty, out)
                } else if *ty == Type::FLOAT4 {
                    (*x as f32).to_sql(ty, out)
                } else {
                    Err(mismatch())
                }
            }
            Value::Text(s) => {
                if *ty == Type::TEXT
                    || *ty == Type::VARCHAR
                    || *ty == Type::BPCHAR
                    || *ty == Type::NAME
                    || *ty == Type::UNKNOWN
                {
                    s.as_str().to_sql(&Type::TEXT, out)
                } else {
                    Err(mismatch())
                }
            }
        }
    }

    fn accepts(_: &Type) -> bool {
        true
    }

    postgres::types::to_sql_checked!();
}

/// Prepared statements of one PostgreSQL connection, by their text.
pub(crate) type StatementCache = HashMap<String, postgres::Statement>;

/// A PostgreSQL transaction with its connection's statement cache.
pub(crate) struct Pg<'t, 'c> {
    pub(crate) tx: &'t mut postgres::Transaction<'c>,
    pub(crate) cache: &'t mut StatementCache,
}

impl Pg<'_, '_> {
    fn prepare(&mut self, path: &Path, sql: &str) -> Result<postgres::Statement> {
        if let Some(s) = self.cache.get(sql) {
            return Ok(s.clone());
        }
        let stmt = self
            .tx
            .prepare(&to_postgres(sql))
            .map_err(|e| JournalError::pg(path, e))?;
        self.cache.insert(sql.to_string(), stmt.clone());
        Ok(stmt)
    }
}

fn pg_values(params: Params<'_>) -> Vec<Value> {
    params.iter().map(|p| p.value()).collect()
}

impl Sql for Pg<'_, '_> {
    fn engine(&self) -> Engine {
        Engine::Postgres
    }

    fn exec(&mut self, path: &Path, sql: &str, params: Params<'_>) -> Result<u64> {
        let stmt = self.prepare(path, sql)?;
        let values = pg_values(params);
        let refs: Vec<&(dyn ToSql + Sync)> =
            values.iter().map(|v| v as &(dyn ToSql + Sync)).collect();
        self.tx
            .execute(&stmt, &refs)
            .map_err(|e| JournalError::pg(path, e))
    }

    fn each(
        &mut self,
        path: &Path,
        sql: &str,
        params: Params<'_>,
        f: &mut dyn FnMut(&Row<'_>) -> Result<()>,
    ) -> Result<()> {
        let stmt = self.prepare(path, sql)?;
        let values = pg_values(params);
        let refs: Vec<&(dyn ToSql + Sync)> =
            values.iter().map(|v| v as &(dyn ToSql + Sync)).collect();
        let rows = self
            .tx
            .query(&stmt, &refs)
            .map_err(|e| JournalError::pg(path, e))?;
        for r in &rows {
            f(&Row::Postgres(r, path))?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parameters_become_dollar_numbers_outside_quotes() {
        assert_eq!(
            to_postgres("SELECT a FROM t WHERE b = ?1 AND c = '?2' AND d = ?12 -- ?3\nAND e = ?"),
            "SELECT a FROM t WHERE b = $1 AND c = '?2' AND d = $12 -- ?3\nAND e = ?"
        );
        assert_eq!(to_postgres("SELECT \"?1\", ?2"), "SELECT \"?1\", $2");
    }

    #[test]
    fn sqlite_rows_convert_by_type() {
        let conn = rusqlite::Connection::open_in_memory().unwrap();
        let path = Path::new(":memory:");
        let mut db = Lite(&conn);
        let db: &mut dyn Sql = &mut db;
        db.exec(path, "CREATE TABLE t (a INTEGER, b TEXT, c REAL)", &[])
            .unwrap();
        db.exec(
            path,
            "INSERT INTO t VALUES (?1, ?2, ?3)",
            &[&7_u32, &"x", &Some(2.5)],
        )
        .unwrap();
        db.exec(
            path,
            "INSERT INTO t VALUES (?1, ?2, ?3)",
            &[&-1_i64, &None::<String>, &None::<f64>],
        )
        .unwrap();
        let rows = db
            .query(path, "SELECT a, b, c FROM t ORDER BY a", &[], |r| {
                Ok((
                    r.get::<i64>(0)?,
                    r.get::<Option<String>>(1)?,
                    r.lenient::<f64>(2),
                ))
            })
            .unwrap();
        assert_eq!(rows, [(-1, None, None), (7, Some("x".into()), Some(2.5))]);
        // A negative count is not a u32: a clear error, not a wrapped number.
        let err = db
            .query_one(path, "SELECT a FROM t WHERE a < 0", &[], |r| {
                r.get::<u32>(0)
            })
            .unwrap_err();
        assert!(matches!(err, JournalError::BadValue { .. }), "{err:?}");
    }
}
