//! Reads added on branch r-control2 (to be folded into the storage engine
//! at merge): the area a team estimated for each clearing found at a
//! control point, which the assessment's area estimate uses.

use super::Reader;
use crate::error::Result;
use std::collections::HashMap;

impl Reader<'_> {
    /// `area_ha` of every report on a control point that has one, by report id.
    pub fn control_report_areas(&self) -> Result<HashMap<String, f64>> {
        let mut st = self.conn.prepare_cached(
            "SELECT report_id, area_ha FROM reports
             WHERE control_code IS NOT NULL AND area_ha IS NOT NULL",
        )?;
        let v = st
            .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))?
            .collect::<Result<HashMap<String, f64>>>()?;
        Ok(v)
    }
}
