//! Accounts: signing in and out, sessions and API tokens, passwords, and the admin's user list.

pub mod account;
pub mod auth;
pub mod session;
