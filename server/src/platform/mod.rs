//! What every step of the flow stands on: storage (the only SQL), accounts
//! and access, settings, and durable file writes. Nothing here imports a
//! step of the flow.

pub mod auth;
pub mod backup;
pub mod durable;
pub mod settings;
pub mod storage;
