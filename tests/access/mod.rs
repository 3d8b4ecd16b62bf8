//! The world the access tests ask in: the demo builds with a run, a reading, a picture and share
//! links, every kind of visitor, and how each route of the route table is filled in and asked
//! (its address and a body it accepts). Shared by the access matrix and the header tests.
#![allow(dead_code)]

use std::collections::BTreeMap;

use axum::body::Body;
use axum::http::{Method, Request, header};
use eddybench::secrets::{random_token, token_hash};
use eddybench::store::{NewReading, NewRun, NewShare, TableFingerprint, UserRole, now_unix_s};
use eddybench::web::RouteInfo;

use crate::common::{self, HOST, ORIGIN, Session, TestApp};

pub const TOUCHED_BY_ANY_REQUEST: [&str; 2] = ["sessions.last_seen_at", "api_tokens.last_used_at"];

// ---- who asks -------------------------------------------------------------------------------

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum ShareKind {
    Valid,
    Revoked,
    Expired,
    OtherBuild,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Principal {
    Anonymous,
    Share(ShareKind),
    Viewer,
    Editor,
    Admin,
    /// An API token of a viewer.
    ViewerToken,
    /// An API token of an editor.
    Token,
    /// An editor's API token that has been revoked.
    RevokedToken,
}

/// The columns of the matrix, least privileged first: the walk sends each route's requests in
/// this order, so that the refusals come before any write succeeds.
pub const PRINCIPALS: [(Principal, &str); 11] = [
    (Principal::Anonymous, "anon"),
    (Principal::Share(ShareKind::Valid), "share"),
    (Principal::Share(ShareKind::Revoked), "sh-rev"),
    (Principal::Share(ShareKind::Expired), "sh-exp"),
    (Principal::Share(ShareKind::OtherBuild), "sh-oth"),
    (Principal::Viewer, "viewer"),
    (Principal::ViewerToken, "tok-v"),
    (Principal::Editor, "editor"),
    (Principal::Admin, "admin"),
    (Principal::Token, "token"),
    (Principal::RevokedToken, "tk-rev"),
];

pub fn is_share_path(path: &str) -> bool {
    path.starts_with("/s/")
}

// ---- the world the requests are made in -------------------------------------------------------

pub struct World {
    pub app: TestApp,
    pub slug: String,
    pub build_name: String,
    pub other_build_name: String,
    pub run_id: i64,
    pub reading_id: i64,
    pub attachment_id: i64,
    /// A link of the main build that the share routes revoke (not one of the principals').
    pub share_target_id: i64,
    pub share_tokens: BTreeMap<ShareKind, String>,
    pub viewer: Session,
    pub editor: Session,
    pub admin: Session,
    pub viewer_token: String,
    pub token: String,
    pub revoked_token: String,
}

/// A tiny valid PNG, encoded by the image library the server decodes with.
pub fn tiny_png() -> Vec<u8> {
    use image::ImageEncoder;
    let pixels: Vec<u8> = (0..64).map(|i| (i * 4) as u8).collect();
    let mut out = Vec::new();
    image::codecs::png::PngEncoder::new(&mut out)
        .write_image(&pixels, 8, 8, image::ExtendedColorType::L8)
        .unwrap();
    out
}

pub const BOUNDARY: &str = "access-matrix-5c2e";

pub fn multipart(
    fields: &[(&str, &str)],
    file_name: &str,
    content_type: &str,
    bytes: &[u8],
) -> Vec<u8> {
    let mut body = Vec::new();
    for (name, value) in fields {
        body.extend(
            format!(
                "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"{name}\"\r\n\r\n{value}\r\n"
            )
            .bytes(),
        );
    }
    body.extend(
        format!(
            "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"file\"; \
             filename=\"{file_name}\"\r\nContent-Type: {content_type}\r\n\r\n"
        )
        .bytes(),
    );
    body.extend_from_slice(bytes);
    body.extend(format!("\r\n--{BOUNDARY}--\r\n").bytes());
    body
}

pub async fn new_share(
    app: &TestApp,
    build_id: eddybench::store::BuildId,
    label: &str,
    expires_at: Option<i64>,
) -> (i64, String) {
    let token = random_token();
    let id = app
        .store
        .create_share(&NewShare {
            build_id,
            revision_number: None,
            label,
            token_hash: &token_hash(&token),
            created_by: None,
            expires_at,
        })
        .await
        .unwrap();
    (id.0, token)
}

impl World {
    /// The demo builds, an open run of the main build with readings and a picture, the share
    /// links, the signed-in users and the tokens.
    pub async fn new() -> World {
        let app = TestApp::new().await;
        let login = eddybench::demo::seed(&app.store).await.unwrap();
        let builds = app.store.list_builds().await.unwrap();
        let main = app.store.build_by_slug(&builds[0].slug).await.unwrap();
        let other = app.store.build_by_slug(&builds[1].slug).await.unwrap();
        let editor_user = app
            .store
            .user_by_name(&login.editor_name)
            .await
            .unwrap()
            .unwrap();

        let r1 = app.store.revision_by_number(main.id, 1).await.unwrap();
        let channels: Vec<String> = ["supply_voltage", "supply_current", "frequency"]
            .map(String::from)
            .to_vec();
        let run_id = app
            .store
            .create_run(&NewRun {
                build_id: main.id,
                revision_id: r1.id,
                operator: "Matrix",
                created_by: Some(editor_user.id),
                started_at: None,
                supply_setting_v: Some(24.0),
                supply_current_limit_a: Some(10.0),
                load: "ferrous",
                water_mass_kg: None,
                vessel_heat_capacity_j_per_k: None,
                notes: "",
                channels: &channels,
            })
            .await
            .unwrap();
        let readings: Vec<NewReading> = [(0.0, 24.0, 5.0, 151e3), (30.0, 23.9, 5.2, 150e3)]
            .iter()
            .flat_map(|&(t_s, v, a, f)| {
                [
                    ("supply_voltage", v),
                    ("supply_current", a),
                    ("frequency", f),
                ]
                .map(|(channel, value)| NewReading {
                    t_s,
                    channel: channel.into(),
                    value,
                    client_id: None,
                })
            })
            .collect();
        app.store
            .add_readings(run_id, &readings, Some(editor_user.id))
            .await
            .unwrap();
        let reading_id = app.store.reading_history(run_id).await.unwrap()[0].id.0;

        let viewer = app
            .login(&login.viewer_name, &login.viewer_password)
            .await
            .expect("the demo viewer signs in");
        let editor = app
            .login(&login.editor_name, &login.editor_password)
            .await
            .expect("the demo editor signs in");
        let admin = app.signed_in("matrix-admin", UserRole::Admin).await;
        let token = app
            .store
            .create_token(editor_user.id, "matrix")
            .await
            .unwrap()
            .token;
        let viewer_user = app
            .store
            .user_by_name(&login.viewer_name)
            .await
            .unwrap()
            .unwrap();
        let viewer_token = app
            .store
            .create_token(viewer_user.id, "matrix viewer")
            .await
            .unwrap()
            .token;
        let revoked = app
            .store
            .create_token(editor_user.id, "revoked")
            .await
            .unwrap();
        app.store.revoke_token(revoked.id).await.unwrap();

        let mut share_tokens = BTreeMap::new();
        share_tokens.insert(
            ShareKind::Valid,
            new_share(&app, main.id, "valid", None).await.1,
        );
        let (revoked_id, revoked_token) = new_share(&app, main.id, "revoked", None).await;
        app.store
            .revoke_share(eddybench::store::ShareId(revoked_id))
            .await
            .unwrap();
        share_tokens.insert(ShareKind::Revoked, revoked_token);
        // The store takes any expiry; the web refuses one in the past, so this is how a link
        // that has run out looks.
        let expired = new_share(&app, main.id, "expired", Some(now_unix_s() - 60)).await;
        share_tokens.insert(ShareKind::Expired, expired.1);
        let other_share = new_share(&app, other.id, "other build", None).await;
        share_tokens.insert(ShareKind::OtherBuild, other_share.1);
        let share_target_id = new_share(&app, main.id, "to revoke", None).await.0;

        let upload = app
            .send(
                Request::post(format!("/builds/{}/runs/{run_id}/attachments", main.slug))
                    .header(header::HOST, HOST)
                    .header(header::ORIGIN, ORIGIN)
                    .header(header::COOKIE, &editor.cookie)
                    .header("x-csrf-token", &editor.csrf)
                    .header(
                        header::CONTENT_TYPE,
                        format!("multipart/form-data; boundary={BOUNDARY}"),
                    )
                    .body(Body::from(multipart(
                        &[("kind", "setup"), ("caption", "bench")],
                        "bench.png",
                        "image/png",
                        &tiny_png(),
                    )))
                    .unwrap(),
            )
            .await;
        assert_eq!(upload.status.as_u16(), 303, "{}", upload.body);
        let attachment_id = app
            .store
            .attachments_of_run(run_id)
            .await
            .unwrap()
            .first()
            .expect("the picture is saved")
            .id
            .0;

        World {
            slug: main.slug.clone(),
            build_name: main.name.clone(),
            other_build_name: other.name.clone(),
            run_id: run_id.0,
            reading_id,
            attachment_id,
            share_target_id,
            share_tokens,
            viewer,
            editor,
            admin,
            token,
            viewer_token,
            revoked_token: revoked.token,
            app,
        }
    }

    pub fn share_token(&self, principal: Principal) -> Option<&str> {
        match principal {
            Principal::Share(kind) => Some(&self.share_tokens[&kind]),
            _ => None,
        }
    }

    pub async fn fingerprints(&self) -> Vec<TableFingerprint> {
        self.app
            .store
            .table_fingerprints(&TOUCHED_BY_ANY_REQUEST)
            .await
            .unwrap()
    }
}

// ---- filling a route in -----------------------------------------------------------------------

/// The route's address with its parameters filled from the world, or why it cannot be filled.
pub fn fill(path: &str, world: &World, principal: Principal) -> Result<String, String> {
    let segments: Vec<&str> = path.split('/').collect();
    let mut filled = Vec::with_capacity(segments.len());
    for (i, segment) in segments.iter().enumerate() {
        if !segment.contains('{') {
            filled.push(segment.to_string());
            continue;
        }
        let before = if i > 0 { segments[i - 1] } else { "" };
        let value = match (before, *segment) {
            // On a share page the first segment is the link's token (see reader.rs).
            ("s", "{slug}") if i == 2 => world
                .share_token(principal)
                .unwrap_or(&world.slug)
                .to_string(),
            (_, "{slug}") => world.slug.clone(),
            ("revisions", "{label}") => "r1".into(),
            ("runs", "{id}") => world.run_id.to_string(),
            ("shares", "{id}") => world.share_target_id.to_string(),
            ("readings", "{reading}") => world.reading_id.to_string(),
            ("attachments", "{attachment}") => world.attachment_id.to_string(),
            ("export", "{file}") => "runs.csv".into(),
            _ => {
                return Err(format!(
                    "no fixture for {segment} (after /{before}) in {path}: add one to fill() \
                     so the access matrix walks the new route"
                ));
            }
        };
        filled.push(value);
    }
    let mut address = filled.join("/");
    // A comparison needs two revisions, or it answers with the chooser (422).
    if address.ends_with("/compare") {
        address.push_str("?revs=r1,r2");
    }
    Ok(address)
}

pub enum Payload {
    None,
    Form(Vec<(&'static str, String)>),
    Json(String),
    Multipart(Vec<u8>),
}

/// A body that the route would accept from someone allowed to use it, so that a refusal in
/// the matrix is about who asks and not about what was sent.
pub fn payload(route: &RouteInfo) -> Result<Payload, String> {
    if route.method == Method::GET || route.method == Method::DELETE {
        return Ok(Payload::None);
    }
    let form = |fields: &[(&'static str, &str)]| {
        Payload::Form(fields.iter().map(|&(k, v)| (k, v.to_string())).collect())
    };
    let json = |value: serde_json::Value| Payload::Json(value.to_string());
    let parts = serde_json::json!({
        "tank_capacitor": {"capacitance_f": 3.3e-7, "count": 6},
        "work_coil": {"inductance_h": 1.2e-6}
    });
    Ok(match route.path {
        "/login" => form(&[("name", "matrix-admin"), ("password", common::PASSWORD)]),
        "/logout" => form(&[]),
        // The first visitor allowed here is the demo's viewer, so its own password.
        "/account/password" => form(&[
            ("current", "bench-visitor-2026"),
            ("new", "a new matrix password"),
            ("repeat", "a new matrix password"),
        ]),
        "/admin/users" => form(&[("name", "matrix-new"), ("role", "viewer")]),
        "/builds" => form(&[("name", "Matrix build")]),
        "/builds/{slug}/revisions" => form(&[
            ("from", "r1"),
            ("tank_capacitor.present", "on"),
            ("tank_capacitor.capacitance_f", "330n"),
            ("tank_capacitor.count", "6"),
            ("work_coil.present", "on"),
            ("work_coil.inductance_h", "1.2u"),
        ]),
        "/builds/{slug}/runs" => form(&[
            ("revision", "r1"),
            ("load", "none"),
            ("supply_setting_v", "24"),
            ("channel", "supply_voltage"),
        ]),
        "/builds/{slug}/runs/{id}/readings" => form(&[("value.supply_voltage", "24.1 V")]),
        "/builds/{slug}/runs/{id}/marks" => form(&[("text", "fan on")]),
        "/builds/{slug}/runs/{id}/entry-order" => form(&[("earlier", "supply_voltage")]),
        "/builds/{slug}/runs/{id}/readings/{reading}/correct" => form(&[("value", "24.2")]),
        "/builds/{slug}/runs/{id}/finish" => form(&[("outcome", "completed")]),
        "/builds/{slug}/runs/{id}/attachments" => Payload::Multipart(multipart(
            &[("kind", "scope"), ("caption", "gate")],
            "gate.png",
            "image/png",
            &tiny_png(),
        )),
        "/builds/{slug}/runs/{id}/readings.csv" => Payload::Multipart(multipart(
            &[],
            "readings.csv",
            "text/csv",
            b"t_s,channel,value\n60,supply_voltage,24\n",
        )),
        "/builds/{slug}/shares" => form(&[("label", "matrix"), ("expires_days", "7")]),
        "/builds/{slug}/shares/{id}/revoke" => form(&[]),
        "/api/v1/model" => json(serde_json::json!({
            "parts": parts,
            "operating_point": {"supply_voltage_v": 24}
        })),
        "/api/v1/builds" => json(serde_json::json!({"name": "Matrix API build"})),
        "/api/v1/builds/{slug}/revisions" => json(serde_json::json!({"parts": parts})),
        "/api/v1/builds/{slug}/runs" => json(serde_json::json!({"revision": "r1", "load": "none"})),
        "/api/v1/runs/{id}/readings" => json(serde_json::json!([
            {"t_s": 60, "channel": "supply_voltage", "value": 24.0}
        ])),
        "/api/v1/runs/{id}/finish" => json(serde_json::json!({"outcome": "completed"})),
        "/api/v1/builds/{slug}/shares" => json(serde_json::json!({"label": "matrix"})),
        _ => {
            return Err(format!(
                "no request body for {} {}: add one to payload() (one the route accepts) so \
                 the access matrix proves who may use it",
                route.method, route.path
            ));
        }
    })
}

/// The request a principal sends: browsers with their cookie, this site's Origin and the form
/// token; scripts with their token; anonymous visitors and links with nothing (no Origin
/// either, so that the form-token check lets them through to the handler's own check).
pub fn request(
    route: &RouteInfo,
    address: &str,
    payload: &Payload,
    world: &World,
    principal: Principal,
) -> Request<Body> {
    let mut builder = Request::builder()
        .method(route.method.clone())
        .uri(address)
        .header(header::HOST, HOST);
    let session = match principal {
        Principal::Viewer => Some(&world.viewer),
        Principal::Editor => Some(&world.editor),
        Principal::Admin => Some(&world.admin),
        _ => None,
    };
    if let Some(session) = session {
        builder = builder
            .header(header::COOKIE, &session.cookie)
            .header(header::ORIGIN, ORIGIN)
            .header("x-csrf-token", &session.csrf);
    }
    let bearer = match principal {
        Principal::ViewerToken => Some(&world.viewer_token),
        Principal::Token => Some(&world.token),
        Principal::RevokedToken => Some(&world.revoked_token),
        _ => None,
    };
    if let Some(token) = bearer {
        builder = builder.header(header::AUTHORIZATION, format!("Bearer {token}"));
    }
    let body = match payload {
        Payload::None => Body::empty(),
        Payload::Form(fields) => {
            builder = builder.header(header::CONTENT_TYPE, "application/x-www-form-urlencoded");
            let mut all: Vec<(&str, &str)> = fields.iter().map(|(k, v)| (*k, v.as_str())).collect();
            if let Some(session) = session {
                all.push(("csrf", &session.csrf));
            }
            Body::from(common::form_body(&all))
        }
        Payload::Json(text) => {
            builder = builder.header(header::CONTENT_TYPE, "application/json");
            Body::from(text.clone())
        }
        Payload::Multipart(bytes) => {
            builder = builder.header(
                header::CONTENT_TYPE,
                format!("multipart/form-data; boundary={BOUNDARY}"),
            );
            Body::from(bytes.clone())
        }
    };
    builder.body(body).unwrap()
}
