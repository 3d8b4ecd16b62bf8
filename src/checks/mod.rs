//! Pure checks of what people type, one per write action, shared by every door (the pages, the
//! API, an import and the command line) so the same input gets the same verdict everywhere.
//! Nothing here touches the database or the web framework.

pub mod accounts;
