//! PostgreSQL connections for the engine layer: parameters become the types
//! the server asks for, column values come back as SQLite's five storage
//! classes (see the module above), statements are cached per connection.

use super::dollar_placeholders;
use crate::error::{Error, Result};
use bytes::BytesMut;
use postgres::types::{FromSql as PgFromSql, IsNull, ToSql as PgToSql, Type, to_sql_checked};
use rusqlite::types::{FromSql, ToSql as LiteToSql, ToSqlOutput, Value, ValueRef};
use std::cell::{RefCell, RefMut};
use std::collections::HashMap;

type BoxError = Box<dyn std::error::Error + Sync + Send>;

/// Statements kept per connection before the cache starts again.
const STATEMENT_CACHE: usize = 256;

/// One PostgreSQL connection with its statement cache.
pub struct PgConn {
    client: RefCell<postgres::Client>,
    cache: RefCell<HashMap<String, postgres::Statement>>,
}

impl PgConn {
    pub fn connect(url: &str) -> Result<PgConn> {
        let client = postgres::Client::connect(url, postgres::NoTls)?;
        Ok(PgConn {
            client: RefCell::new(client),
            cache: RefCell::new(HashMap::new()),
        })
    }

    pub fn client(&self) -> RefMut<'_, postgres::Client> {
        self.client.borrow_mut()
    }

    pub fn is_closed(&self) -> bool {
        self.client.borrow().is_closed()
    }

    pub(crate) fn statement(&self, sql: &str, cached: bool) -> Result<postgres::Statement> {
        if cached && let Some(s) = self.cache.borrow().get(sql) {
            return Ok(s.clone());
        }
        let st = self.client().prepare(&postgres_sql(sql))?;
        if cached {
            let mut cache = self.cache.borrow_mut();
            if cache.len() >= STATEMENT_CACHE {
                cache.clear();
            }
            cache.insert(sql.to_string(), st.clone());
        }
        Ok(st)
    }

    pub(crate) fn batch(&self, sql: &str) -> Result<()> {
        Ok(self.client().batch_execute(sql)?)
    }

    pub(crate) fn execute(
        &self,
        st: &postgres::Statement,
        args: &[&dyn LiteToSql],
    ) -> Result<usize> {
        let values = params(args)?;
        let refs: Vec<&(dyn PgToSql + Sync)> = values.iter().map(|v| v as _).collect();
        Ok(self.client().execute(st, &refs)? as usize)
    }

    pub(crate) fn query(
        &self,
        st: &postgres::Statement,
        args: &[&dyn LiteToSql],
    ) -> Result<Vec<postgres::Row>> {
        let values = params(args)?;
        let refs: Vec<&(dyn PgToSql + Sync)> = values.iter().map(|v| v as _).collect();
        Ok(self.client().query(st, &refs)?)
    }
}

/// The SQL as PostgreSQL reads it: `$N` placeholders, and the two SQLite
/// functions storage's queries use under PostgreSQL's names.
fn postgres_sql(sql: &str) -> String {
    dollar_placeholders(sql)
        .replace("group_concat(", "string_agg(")
        .replace("char(31)", "chr(31)")
}

fn params(args: &[&dyn LiteToSql]) -> Result<Vec<PgParam>> {
    args.iter()
        .map(|a| match LiteToSql::to_sql(*a)? {
            ToSqlOutput::Borrowed(v) => Ok(PgParam(owned(v)?)),
            ToSqlOutput::Owned(v) => Ok(PgParam(v)),
            _ => Err(Error::Internal(
                "a parameter kind PostgreSQL does not take".into(),
            )),
        })
        .collect()
}

fn owned(v: ValueRef<'_>) -> Result<Value> {
    Ok(match v {
        ValueRef::Null => Value::Null,
        ValueRef::Integer(i) => Value::Integer(i),
        ValueRef::Real(f) => Value::Real(f),
        ValueRef::Text(t) => Value::Text(
            std::str::from_utf8(t)
                .map_err(|e| Error::Invalid(format!("a text parameter that is not UTF-8: {e}")))?
                .to_string(),
        ),
        ValueRef::Blob(b) => Value::Blob(b.to_vec()),
    })
}

/// Column `idx` of `row` read as an SQLite value, then as `T`.
pub(crate) fn column<T: FromSql>(row: &postgres::Row, idx: usize) -> Result<T> {
    let v: PgValue = row.try_get(idx)?;
    T::column_result(ValueRef::from(&v.0)).map_err(|e| {
        Error::Db(rusqlite::Error::FromSqlConversionFailure(
            idx,
            v.0.data_type(),
            Box::new(e),
        ))
    })
}

/// A parameter: one SQLite value, written as the type PostgreSQL inferred.
#[derive(Debug)]
struct PgParam(Value);

fn text_like(ty: &Type) -> bool {
    matches!(
        *ty,
        Type::TEXT | Type::VARCHAR | Type::BPCHAR | Type::NAME | Type::UNKNOWN | Type::JSON
    )
}

fn integer(i: i64, ty: &Type, out: &mut BytesMut) -> std::result::Result<IsNull, BoxError> {
    match *ty {
        Type::INT8 => PgToSql::to_sql(&i, ty, out),
        Type::INT4 => PgToSql::to_sql(&i32::try_from(i)?, ty, out),
        Type::INT2 => PgToSql::to_sql(&i16::try_from(i)?, ty, out),
        Type::FLOAT8 => PgToSql::to_sql(&(i as f64), ty, out),
        Type::FLOAT4 => PgToSql::to_sql(&(i as f32), ty, out),
        Type::BOOL => PgToSql::to_sql(&(i != 0), ty, out),
        _ if text_like(ty) => PgToSql::to_sql(&i.to_string().as_str(), ty, out),
        _ => Err(format!("an integer given for a parameter of type {ty}").into()),
    }
}

fn real(f: f64, ty: &Type, out: &mut BytesMut) -> std::result::Result<IsNull, BoxError> {
    match *ty {
        Type::FLOAT8 => PgToSql::to_sql(&f, ty, out),
        Type::FLOAT4 => PgToSql::to_sql(&(f as f32), ty, out),
        Type::INT8 if f.fract() == 0.0 && f.abs() < 9.0e15 => PgToSql::to_sql(&(f as i64), ty, out),
        _ if text_like(ty) => PgToSql::to_sql(&f.to_string().as_str(), ty, out),
        _ => Err(format!("a real number given for a parameter of type {ty}").into()),
    }
}

impl PgToSql for PgParam {
    fn to_sql(&self, ty: &Type, out: &mut BytesMut) -> std::result::Result<IsNull, BoxError> {
        match &self.0 {
            Value::Null => Ok(IsNull::Yes),
            Value::Integer(i) => integer(*i, ty, out),
            Value::Real(f) => real(*f, ty, out),
            Value::Text(s) if *ty == Type::JSONB => {
                out.extend_from_slice(&[1]);
                out.extend_from_slice(s.as_bytes());
                Ok(IsNull::No)
            }
            Value::Text(s) if text_like(ty) => PgToSql::to_sql(&s.as_str(), ty, out),
            Value::Text(_) => Err(format!("text given for a parameter of type {ty}").into()),
            Value::Blob(b) => PgToSql::to_sql(&b.as_slice(), ty, out),
        }
    }

    fn accepts(_: &Type) -> bool {
        true
    }

    to_sql_checked!();
}

/// A column value as one of SQLite's storage classes.
struct PgValue(Value);

impl<'a> PgFromSql<'a> for PgValue {
    fn from_sql(ty: &Type, raw: &'a [u8]) -> std::result::Result<Self, BoxError> {
        let v = match *ty {
            Type::INT8 => Value::Integer(<i64 as PgFromSql>::from_sql(ty, raw)?),
            Type::INT4 => Value::Integer(<i32 as PgFromSql>::from_sql(ty, raw)?.into()),
            Type::INT2 => Value::Integer(<i16 as PgFromSql>::from_sql(ty, raw)?.into()),
            Type::OID => Value::Integer(<u32 as PgFromSql>::from_sql(ty, raw)?.into()),
            Type::BOOL => Value::Integer(<bool as PgFromSql>::from_sql(ty, raw)?.into()),
            Type::FLOAT8 => Value::Real(<f64 as PgFromSql>::from_sql(ty, raw)?),
            Type::FLOAT4 => Value::Real(<f32 as PgFromSql>::from_sql(ty, raw)?.into()),
            Type::NUMERIC => numeric(raw)?,
            Type::BYTEA => Value::Blob(raw.to_vec()),
            Type::JSONB => Value::Text(std::str::from_utf8(raw.get(1..).unwrap_or(&[]))?.into()),
            _ if text_like(ty) => Value::Text(std::str::from_utf8(raw)?.into()),
            _ => return Err(format!("a column of type {ty}, which storage does not read").into()),
        };
        Ok(PgValue(v))
    }

    fn from_sql_null(_: &Type) -> std::result::Result<Self, BoxError> {
        Ok(PgValue(Value::Null))
    }

    fn accepts(_: &Type) -> bool {
        true
    }
}

/// PostgreSQL's binary NUMERIC (base-10000 digits): an integer when it has
/// no fraction and fits, else a real (what SQLite's SUM gives).
fn numeric(raw: &[u8]) -> std::result::Result<Value, BoxError> {
    let word = |i: usize| -> std::result::Result<u16, BoxError> {
        let b = raw
            .get(2 * i..2 * i + 2)
            .ok_or("a NUMERIC value cut short")?;
        Ok(u16::from_be_bytes([b[0], b[1]]))
    };
    let n = usize::from(word(0)?);
    let weight = i64::from(word(1)? as i16);
    let sign = word(2)?;
    if sign == 0xC000 {
        return Ok(Value::Real(f64::NAN));
    }
    let negative = sign == 0x4000;
    let digits: Vec<i64> = (0..n)
        .map(|i| word(4 + i).map(i64::from))
        .collect::<std::result::Result<_, _>>()?;
    let fraction = digits
        .iter()
        .enumerate()
        .any(|(i, d)| *d != 0 && weight - (i as i64) < 0);
    if !fraction {
        let mut whole: i128 = 0;
        for k in 0..=weight.max(-1) {
            let d = digits.get(k as usize).copied().unwrap_or(0);
            whole = whole
                .checked_mul(10_000)
                .and_then(|w| w.checked_add(i128::from(d)))
                .ok_or("NUMERIC too large")?;
        }
        if let Ok(v) = i64::try_from(if negative { -whole } else { whole }) {
            return Ok(Value::Integer(v));
        }
    }
    let mut f = 0.0;
    for (i, d) in digits.iter().enumerate() {
        f += *d as f64 * 10_000f64.powi((weight - i as i64) as i32);
    }
    Ok(Value::Real(if negative { -f } else { f }))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn words(w: &[u16]) -> Vec<u8> {
        w.iter().flat_map(|x| x.to_be_bytes()).collect()
    }

    #[test]
    fn numeric_reads_as_sqlite_would() {
        // 123456789 = 1·10000² + 2345·10000 + 6789 (PostgreSQL's numeric.c layout).
        let v = numeric(&words(&[3, 2, 0, 0, 1, 2345, 6789])).unwrap();
        assert_eq!(v, Value::Integer(123_456_789));
        // -12.5 = -(12 + 5000/10000), dscale 1.
        let v = numeric(&words(&[2, 0, 0x4000, 1, 12, 5000])).unwrap();
        assert_eq!(v, Value::Real(-12.5));
        // 0 has no digits.
        assert_eq!(numeric(&words(&[0, 0, 0, 0])).unwrap(), Value::Integer(0));
        // 20000 = 2·10000 (trailing zero digits are left out).
        assert_eq!(
            numeric(&words(&[1, 1, 0, 0, 2])).unwrap(),
            Value::Integer(20_000)
        );
        assert!(numeric(&words(&[3, 0])).is_err(), "cut short");
    }
}
