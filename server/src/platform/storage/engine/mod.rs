//! The engine layer: one connection type over SQLite and PostgreSQL, so the
//! storage files write their SQL once.
//!
//! - Values: rusqlite's value conversions (`ToSql`/`FromSql`, SQLite's five
//!   storage classes) are the one vocabulary for both engines. On
//!   PostgreSQL a parameter becomes the type the server expects (`pg.rs`:
//!   BIGINT, DOUBLE PRECISION, TEXT, BYTEA, also INTEGER, BOOLEAN, NUMERIC,
//!   JSONB) and a column value comes back as one of the five classes, so
//!   every type that already reads from SQLite reads from PostgreSQL.
//! - SQL: placeholders are written `?1`, `?2`, … and rewritten to `$1`, … for
//!   PostgreSQL; [`Conn::dialect`] picks the few phrases that differ.
//! - Statements are cached per connection on both engines.

pub(crate) mod pg;

use crate::error::{Error, Result};
use rusqlite::types::{FromSql, ToSql};

/// Which SQL the connection speaks.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Dialect {
    Sqlite,
    Postgres,
}

/// One connection of either engine (a transaction or a read view).
#[derive(Clone, Copy)]
pub enum Conn<'a> {
    Lite(&'a rusqlite::Connection),
    Pg(&'a pg::PgConn),
}

/// The parameters of one statement.
pub trait Args {
    fn refs(&self) -> Vec<&dyn ToSql>;
}

impl Args for &[&dyn ToSql] {
    fn refs(&self) -> Vec<&dyn ToSql> {
        self.to_vec()
    }
}

impl Args for [&(dyn ToSql + Send + Sync); 0] {
    fn refs(&self) -> Vec<&dyn ToSql> {
        Vec::new()
    }
}

macro_rules! array_args {
    ($($n:literal)+) => {$(
        impl<T: ToSql> Args for [T; $n] {
            fn refs(&self) -> Vec<&dyn ToSql> {
                self.iter().map(|v| v as &dyn ToSql).collect()
            }
        }
    )+};
}
array_args!(1 2 3 4 5 6 7 8 9 10 11 12 13 14 15 16);

/// Parameters from an iterator (a list built at run time).
pub struct ArgList<T>(Vec<T>);

impl<T: ToSql> Args for ArgList<T> {
    fn refs(&self) -> Vec<&dyn ToSql> {
        self.0.iter().map(|v| v as &dyn ToSql).collect()
    }
}

pub fn params_from_iter<I>(iter: I) -> ArgList<I::Item>
where
    I: IntoIterator,
    I::Item: ToSql,
{
    ArgList(iter.into_iter().collect())
}

/// `query_row(…).optional()`: no row is `None`.
pub trait OptionalExtension<T> {
    fn optional(self) -> Result<Option<T>>;
}

impl<T> OptionalExtension<T> for Result<T> {
    fn optional(self) -> Result<Option<T>> {
        match self {
            Ok(v) => Ok(Some(v)),
            Err(Error::Db(rusqlite::Error::QueryReturnedNoRows)) => Ok(None),
            Err(e) => Err(e),
        }
    }
}

/// A column position (from 0).
pub trait ColumnIndex {
    fn index(self) -> usize;
}

impl ColumnIndex for usize {
    fn index(self) -> usize {
        self
    }
}

/// One result row of either engine.
#[derive(Clone, Copy)]
pub enum Row<'r> {
    Lite(&'r rusqlite::Row<'r>),
    Pg(&'r postgres::Row),
}

impl<'r> Row<'r> {
    /// A TEXT column borrowed from the row (no copy), `None` when NULL.
    pub fn text(&self, idx: usize) -> Result<Option<&'r str>> {
        match *self {
            Row::Lite(r) => r.get_ref(idx)?.as_str_or_null().map_err(|e| {
                Error::Db(rusqlite::Error::FromSqlConversionFailure(
                    idx,
                    rusqlite::types::Type::Text,
                    Box::new(e),
                ))
            }),
            Row::Pg(r) => Ok(r.try_get::<_, Option<&'r str>>(idx)?),
        }
    }

    /// Column `idx` (from 0) as `T`.
    pub fn get<I: ColumnIndex, T: FromSql>(&self, idx: I) -> Result<T> {
        let idx = idx.index();
        match self {
            Row::Lite(r) => Ok(r.get(idx)?),
            Row::Pg(r) => pg::column(r, idx),
        }
    }
}

impl<'a> Conn<'a> {
    pub fn dialect(&self) -> Dialect {
        match self {
            Conn::Lite(_) => Dialect::Sqlite,
            Conn::Pg(_) => Dialect::Postgres,
        }
    }

    pub fn execute(&self, sql: &str, p: impl Args) -> Result<usize> {
        self.prepare_once(sql)?.execute(p)
    }

    /// Several statements without parameters.
    pub fn execute_batch(&self, sql: &str) -> Result<()> {
        match self {
            Conn::Lite(c) => Ok(c.execute_batch(sql)?),
            Conn::Pg(c) => c.batch(sql),
        }
    }

    /// The first row; no row is an error that [`OptionalExtension::optional`]
    /// turns into `None`.
    pub fn query_row<T>(
        &self,
        sql: &str,
        p: impl Args,
        f: impl FnOnce(&Row<'_>) -> Result<T>,
    ) -> Result<T> {
        self.prepare_once(sql)?.query_row(p, f)
    }

    /// As rusqlite's `Connection::execute` and `query_row` do, SQLite
    /// prepares such a statement afresh (its cache is kept for the
    /// statements storage marks as repeated); PostgreSQL keeps every
    /// statement, since preparing costs a round trip.
    fn prepare_once(&self, sql: &str) -> Result<Stmt<'a>> {
        match self {
            Conn::Lite(_) => self.prepare(sql),
            Conn::Pg(_) => self.prepare_cached(sql),
        }
    }

    /// A statement used once (SQL built at run time).
    pub fn prepare(&self, sql: &str) -> Result<Stmt<'a>> {
        match self {
            Conn::Lite(c) => Ok(Stmt::Lite(c.prepare(sql)?)),
            Conn::Pg(c) => Ok(Stmt::Pg(c, c.statement(sql, false)?)),
        }
    }

    /// A statement kept for reuse on this connection.
    pub fn prepare_cached(&self, sql: &str) -> Result<Stmt<'a>> {
        match self {
            Conn::Lite(c) => Ok(Stmt::LiteCached(c.prepare_cached(sql)?)),
            Conn::Pg(c) => Ok(Stmt::Pg(c, c.statement(sql, true)?)),
        }
    }
}

/// A prepared statement.
pub enum Stmt<'a> {
    Lite(rusqlite::Statement<'a>),
    LiteCached(rusqlite::CachedStatement<'a>),
    Pg(&'a pg::PgConn, postgres::Statement),
}

impl Stmt<'_> {
    pub fn execute(&mut self, p: impl Args) -> Result<usize> {
        let refs = p.refs();
        match self {
            Stmt::Lite(s) => Ok(s.execute(&refs[..])?),
            Stmt::LiteCached(s) => Ok(s.execute(&refs[..])?),
            Stmt::Pg(c, s) => c.execute(s, &refs),
        }
    }

    pub fn query_row<T>(
        &mut self,
        p: impl Args,
        f: impl FnOnce(&Row<'_>) -> Result<T>,
    ) -> Result<T> {
        let mut rows = self.query(p)?;
        match rows.next()? {
            Some(r) => f(&r),
            None => Err(Error::Db(rusqlite::Error::QueryReturnedNoRows)),
        }
    }

    /// Rows mapped by `f`, read as the caller iterates (on PostgreSQL
    /// the rows are fetched first).
    pub fn query_map<T, F>(&mut self, p: impl Args, f: F) -> Result<Mapped<'_, F>>
    where
        F: FnMut(&Row<'_>) -> Result<T>,
    {
        Ok(Mapped {
            rows: self.query(p)?,
            f,
        })
    }

    pub fn query(&mut self, p: impl Args) -> Result<Rows<'_>> {
        let refs = p.refs();
        match self {
            Stmt::Lite(s) => Ok(Rows::Lite(s.query(&refs[..])?)),
            Stmt::LiteCached(s) => Ok(Rows::Lite(s.query(&refs[..])?)),
            Stmt::Pg(c, s) => Ok(Rows::Pg(c.query(s, &refs)?.into_iter(), None)),
        }
    }
}

/// Rows of a query, read one at a time.
pub enum Rows<'s> {
    Lite(rusqlite::Rows<'s>),
    Pg(std::vec::IntoIter<postgres::Row>, Option<postgres::Row>),
}

impl Rows<'_> {
    #[allow(clippy::should_implement_trait)]
    pub fn next(&mut self) -> Result<Option<Row<'_>>> {
        match self {
            Rows::Lite(r) => Ok(r.next()?.map(Row::Lite)),
            Rows::Pg(it, current) => {
                *current = it.next();
                Ok(current.as_ref().map(Row::Pg))
            }
        }
    }
}

/// [`Stmt::query_map`]'s iterator.
pub struct Mapped<'s, F> {
    rows: Rows<'s>,
    f: F,
}

impl<T, F> Iterator for Mapped<'_, F>
where
    F: FnMut(&Row<'_>) -> Result<T>,
{
    type Item = Result<T>;

    fn next(&mut self) -> Option<Result<T>> {
        match self.rows.next() {
            Ok(Some(r)) => Some((self.f)(&r)),
            Ok(None) => None,
            Err(e) => Some(Err(e)),
        }
    }
}

/// `?N` placeholders as PostgreSQL's `$N` (outside quoted text).
pub fn dollar_placeholders(sql: &str) -> String {
    let mut out = String::with_capacity(sql.len());
    let mut quoted = false;
    let mut chars = sql.chars().peekable();
    while let Some(c) = chars.next() {
        if c == '\'' {
            quoted = !quoted;
        }
        if c == '?' && !quoted && chars.peek().is_some_and(|d| d.is_ascii_digit()) {
            out.push('$');
        } else {
            out.push(c);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn placeholders_become_dollars_outside_text() {
        assert_eq!(
            dollar_placeholders("SELECT ?1, '?2', x FROM t WHERE a = ?12 AND b = ?"),
            "SELECT $1, '?2', x FROM t WHERE a = $12 AND b = ?"
        );
    }
}
