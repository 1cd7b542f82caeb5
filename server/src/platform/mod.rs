//! What every step of the flow stands on: storage (the only SQL), accounts
//! and access, settings, durable file writes, and the administration's
//! changes with their log (`admin`). Nothing here imports a
//! step of the flow.

pub mod admin;
pub mod auth;
pub mod backup;
pub mod durable;
pub mod evidence;
pub mod i18n;
pub mod settings;
pub mod storage;
