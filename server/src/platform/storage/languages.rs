//! Each user's chosen language for the pages (`POST /language`). A user
//! with no row has chosen none: the browser's `Accept-Language` decides,
//! then the organisation's default (`web::i18n`).

use super::engine::OptionalExtension;
use super::{Reader, Tx};
use crate::error::Result;
use rusqlite::params;

/// Schema for this module; appended to the migration list. The language
/// codes are those of `templates/i18n/` (checked again when read).
pub const LANGUAGES_MIGRATION: &str = r#"
    CREATE TABLE user_languages (
        user_id INTEGER PRIMARY KEY REFERENCES users(id),
        language TEXT NOT NULL CHECK (language IN ('en', 'es', 'fr', 'id', 'pt'))
    );
"#;

impl Tx<'_> {
    /// Store `user_id`'s choice (`None` forgets it).
    pub fn set_user_language(&self, user_id: i64, language: Option<&str>) -> Result<()> {
        match language {
            Some(l) => self.tx.execute(
                "INSERT INTO user_languages (user_id, language) VALUES (?1, ?2)
                 ON CONFLICT (user_id) DO UPDATE SET language = excluded.language",
                params![user_id, l],
            )?,
            None => self
                .tx
                .execute("DELETE FROM user_languages WHERE user_id = ?1", [user_id])?,
        };
        Ok(())
    }
}

impl Reader<'_> {
    /// `user_id`'s chosen language, if any.
    pub fn user_language(&self, user_id: i64) -> Result<Option<String>> {
        self.conn
            .query_row(
                "SELECT language FROM user_languages WHERE user_id = ?1",
                [user_id],
                |r| r.get(0),
            )
            .optional()
    }
}
