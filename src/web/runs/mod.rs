//! Runs from the browser: start one, log readings at the bench, correct them, finish it.

pub mod analysis;
pub mod digests;
mod entry;
mod live;
pub mod lookup;
mod page;
pub mod readings_import;
mod set;
mod start;
pub mod view;

use crate::web::routes::{Access, Routes};

pub fn router() -> Routes {
    Routes::new()
        .post("/builds/{slug}/runs", Access::Editor, start::create)
        .get("/builds/{slug}/runs/new", Access::Editor, start::new_form)
        .get("/builds/{slug}/runs/{id}", Access::Viewer, page::show)
        .get("/s/{slug}/runs/{id}", Access::Share, page::show)
        .post(
            "/builds/{slug}/runs/{id}/readings",
            Access::Editor,
            set::add_set,
        )
        .post(
            "/builds/{slug}/runs/{id}/marks",
            Access::Editor,
            set::add_mark,
        )
        .post(
            "/builds/{slug}/runs/{id}/entry-order",
            Access::Editor,
            set::move_field_earlier,
        )
        .get(
            "/builds/{slug}/runs/{id}/events",
            Access::Viewer,
            live::events,
        )
        .get("/s/{slug}/runs/{id}/events", Access::Share, live::events)
        .post(
            "/builds/{slug}/runs/{id}/readings/{reading}/correct",
            Access::Editor,
            entry::correct_reading,
        )
        .post(
            "/builds/{slug}/runs/{id}/finish",
            Access::Editor,
            entry::finish,
        )
}
