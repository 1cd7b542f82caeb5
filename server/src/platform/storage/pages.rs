//! Small reads for the pages: how many returns and reports each bundle has
//! received (the trips list shows a bundle as returned once it has one).

use super::Reader;
use crate::error::Result;
use std::collections::HashMap;

impl Reader<'_> {
    /// Per bundle id: (returns received, reports stored).
    pub fn bundle_return_counts(&self) -> Result<HashMap<String, (i64, i64)>> {
        let mut out: HashMap<String, (i64, i64)> = HashMap::new();
        let mut st = self
            .conn
            .prepare("SELECT bundle_id, COUNT(*) FROM returns GROUP BY bundle_id")?;
        for row in st.query_map([], |r| Ok((r.get::<_, String>(0)?, r.get::<_, i64>(1)?)))? {
            let (id, n) = row?;
            out.entry(id).or_default().0 = n;
        }
        let mut st = self
            .conn
            .prepare("SELECT bundle_id, COUNT(*) FROM reports GROUP BY bundle_id")?;
        for row in st.query_map([], |r| Ok((r.get::<_, String>(0)?, r.get::<_, i64>(1)?)))? {
            let (id, n) = row?;
            out.entry(id).or_default().1 = n;
        }
        Ok(out)
    }
}

#[cfg(test)]
mod tests {

    #[test]
    fn a_fresh_database_has_no_returns() {
        let dir = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(dir.path());
        assert!(db.read(|r| r.bundle_return_counts()).unwrap().is_empty());
    }
}
