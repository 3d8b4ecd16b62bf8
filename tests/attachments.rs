//! Pictures of a run: upload from the phone, served back unchanged with safe headers, shown as
//! thumbnails; hostile files refused with nothing saved; the same picture stored once.

mod common;

use std::path::{Path, PathBuf};

use axum::body::Body;
use axum::http::{HeaderMap, Request, StatusCode, header};
use http_body_util::BodyExt;
use tower::ServiceExt;

use common::{HOST, ORIGIN, Page, Session, TestApp};
use eddybench::store::UserRole;

const RUN: &str = "/builds/bench-heater/runs/1";
const MIB: usize = 1024 * 1024;

/// An editor with a build, a revision and an open run at `RUN`.
async fn app_with_run() -> (TestApp, Session) {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let made = app
        .post_form("/builds", &session, &[("name", "Bench heater")])
        .await;
    assert_eq!(made.location(), "/builds/bench-heater");
    let revision = app
        .post_form(
            "/builds/bench-heater/revisions",
            &session,
            &[
                ("tank_capacitor.present", "on"),
                ("tank_capacitor.capacitance_f", "0.33u"),
                ("tank_capacitor.count", "6"),
                ("work_coil.present", "on"),
                ("work_coil.inductance_h", "1.2 µH"),
            ],
        )
        .await;
    assert_eq!(revision.status, StatusCode::SEE_OTHER, "{}", revision.body);
    let run = app
        .post_form(
            "/builds/bench-heater/runs",
            &session,
            &[
                ("revision", "r1"),
                ("load", "none"),
                ("channel", "supply_current"),
            ],
        )
        .await;
    assert_eq!(run.location(), RUN);
    (app, session)
}

// ---- pictures made in the test -----------------------------------------------------------

fn crc32(bytes: &[u8]) -> u32 {
    let mut crc = 0xFFFF_FFFFu32;
    for &byte in bytes {
        crc ^= byte as u32;
        for _ in 0..8 {
            crc = if crc & 1 != 0 {
                (crc >> 1) ^ 0xEDB8_8320
            } else {
                crc >> 1
            };
        }
    }
    !crc
}

fn adler32(bytes: &[u8]) -> u32 {
    let (mut a, mut b) = (1u32, 0u32);
    for &byte in bytes {
        a = (a + byte as u32) % 65_521;
        b = (b + a) % 65_521;
    }
    (b << 16) | a
}

/// A valid 8-bit greyscale PNG, built by hand (stored deflate blocks, so no compressor) so the
/// test does not lean on the library the server decodes with. `seed` varies the pixels.
fn png(width: u32, height: u32, seed: u8) -> Vec<u8> {
    let mut raw = Vec::new();
    for y in 0..height {
        raw.push(0); // filter: none
        raw.extend((0..width).map(|x| (x * 7 + y * 3) as u8 ^ seed));
    }
    let mut zlib = vec![0x78, 0x01];
    let blocks: Vec<&[u8]> = raw.chunks(65_535).collect();
    for (i, block) in blocks.iter().enumerate() {
        zlib.push(u8::from(i + 1 == blocks.len()));
        let len = block.len() as u16;
        zlib.extend(len.to_le_bytes());
        zlib.extend((!len).to_le_bytes());
        zlib.extend_from_slice(block);
    }
    zlib.extend(adler32(&raw).to_be_bytes());
    let mut ihdr = Vec::new();
    ihdr.extend(width.to_be_bytes());
    ihdr.extend(height.to_be_bytes());
    ihdr.extend([8, 0, 0, 0, 0]);
    let mut out = b"\x89PNG\r\n\x1a\n".to_vec();
    for (kind, data) in [(b"IHDR", ihdr), (b"IDAT", zlib), (b"IEND", Vec::new())] {
        out.extend((data.len() as u32).to_be_bytes());
        let mut typed = kind.to_vec();
        typed.extend(&data);
        out.extend(&typed);
        out.extend(crc32(&typed).to_be_bytes());
    }
    out
}

/// A real baseline JPEG of a colour gradient.
fn jpeg(width: u32, height: u32) -> Vec<u8> {
    let pixels: Vec<u8> = (0..height)
        .flat_map(|y| (0..width).flat_map(move |x| [(x % 256) as u8, (y % 256) as u8, 128]))
        .collect();
    let mut out = Vec::new();
    image::codecs::jpeg::JpegEncoder::new_with_quality(&mut out, 85)
        .encode(&pixels, width, height, image::ExtendedColorType::Rgb8)
        .unwrap();
    out
}

/// A JPEG stored sideways, as phones do, with the EXIF tag that says "turn 90° clockwise".
fn sideways_jpeg(width: u32, height: u32) -> Vec<u8> {
    use image::ImageEncoder;
    // A TIFF header and one IFD entry: Orientation (0x0112), SHORT, 1 value, 6.
    let mut exif = b"II*\0\x08\0\0\0\x01\0".to_vec();
    exif.extend([0x12, 0x01, 3, 0, 1, 0, 0, 0, 6, 0, 0, 0]);
    exif.extend([0, 0, 0, 0]);
    let pixels = vec![90u8; (width * height * 3) as usize];
    let mut out = Vec::new();
    let mut encoder = image::codecs::jpeg::JpegEncoder::new_with_quality(&mut out, 85);
    encoder.set_exif_metadata(exif).unwrap();
    encoder
        .write_image(&pixels, width, height, image::ExtendedColorType::Rgb8)
        .unwrap();
    out
}

fn webp(width: u32, height: u32) -> Vec<u8> {
    let pixels = vec![200u8; (width * height * 3) as usize];
    let mut out = Vec::new();
    image::codecs::webp::WebPEncoder::new_lossless(&mut out)
        .encode(&pixels, width, height, image::ExtendedColorType::Rgb8)
        .unwrap();
    out
}

/// The classic one-pixel GIF.
const GIF: &[u8] = b"GIF89a\x01\x00\x01\x00\x80\x00\x00\xff\xff\xff\x00\x00\x00\
    \x2c\x00\x00\x00\x00\x01\x00\x01\x00\x00\x02\x02\x44\x01\x00\x3b";

// ---- requests -------------------------------------------------------------------------------

struct Upload<'a> {
    file_name: &'a str,
    content_type: &'a str,
    bytes: &'a [u8],
    kind: &'a str,
    caption: &'a str,
}

impl<'a> Upload<'a> {
    fn picture(file_name: &'a str, content_type: &'a str, bytes: &'a [u8]) -> Upload<'a> {
        Upload {
            file_name,
            content_type,
            bytes,
            kind: "scope",
            caption: "gate waveform",
        }
    }
}

const BOUNDARY: &str = "eddybench-test-7d1f0c";

fn multipart_body(upload: &Upload) -> Vec<u8> {
    let mut body = Vec::new();
    for (name, value) in [("kind", upload.kind), ("caption", upload.caption)] {
        body.extend(
            format!(
                "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"{name}\"\r\n\r\n{value}\r\n"
            )
            .bytes(),
        );
    }
    body.extend(
        format!(
            "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"file\"; filename=\"{}\"\r\n\
             Content-Type: {}\r\n\r\n",
            upload.file_name, upload.content_type
        )
        .bytes(),
    );
    body.extend_from_slice(upload.bytes);
    body.extend(format!("\r\n--{BOUNDARY}--\r\n").bytes());
    body
}

/// Posts the upload form as the phone's browser does; `token` goes in the `csrf` query parameter.
async fn post_upload_with(
    app: &TestApp,
    session: &Session,
    token: Option<&str>,
    origin: &str,
    upload: &Upload<'_>,
) -> Page {
    let path = match token {
        Some(token) => format!("{RUN}/attachments?csrf={token}"),
        None => format!("{RUN}/attachments"),
    };
    app.send(
        Request::post(path)
            .header(header::HOST, HOST)
            .header(header::ORIGIN, origin)
            .header(header::COOKIE, &session.cookie)
            .header(
                header::CONTENT_TYPE,
                format!("multipart/form-data; boundary={BOUNDARY}"),
            )
            .body(Body::from(multipart_body(upload)))
            .unwrap(),
    )
    .await
}

async fn post_upload(app: &TestApp, session: &Session, upload: &Upload<'_>) -> Page {
    post_upload_with(app, session, Some(&session.csrf), ORIGIN, upload).await
}

struct Raw {
    status: StatusCode,
    headers: HeaderMap,
    bytes: Vec<u8>,
}

async fn get_raw(app: &TestApp, path: &str, session: Option<&Session>, etag: Option<&str>) -> Raw {
    let mut request = Request::get(path).header(header::HOST, HOST);
    if let Some(session) = session {
        request = request.header(header::COOKIE, &session.cookie);
    }
    if let Some(etag) = etag {
        request = request.header(header::IF_NONE_MATCH, etag);
    }
    let response = app
        .router
        .clone()
        .oneshot(request.body(Body::empty()).unwrap())
        .await
        .unwrap();
    Raw {
        status: response.status(),
        headers: response.headers().clone(),
        bytes: response
            .into_body()
            .collect()
            .await
            .unwrap()
            .to_bytes()
            .to_vec(),
    }
}

fn header_of(headers: &HeaderMap, name: header::HeaderName) -> &str {
    headers
        .get(&name)
        .map(|v| v.to_str().unwrap())
        .unwrap_or_else(|| panic!("no {name} header"))
}

/// Every file under a directory, as paths relative to it.
fn files_under(root: &Path) -> Vec<PathBuf> {
    let mut found = Vec::new();
    let mut pending = vec![root.to_path_buf()];
    while let Some(dir) = pending.pop() {
        let Ok(entries) = std::fs::read_dir(&dir) else {
            continue;
        };
        for entry in entries {
            let path = entry.unwrap().path();
            if path.is_dir() {
                pending.push(path);
            } else {
                found.push(path.strip_prefix(root).unwrap().to_path_buf());
            }
        }
    }
    found.sort();
    found
}

fn attachment_files(app: &TestApp) -> Vec<PathBuf> {
    files_under(&app.data_dir().join("attachments"))
}

fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::Digest;
    hex::encode(sha2::Sha256::digest(bytes))
}

async fn assert_nothing_saved(app: &TestApp, what: &str) {
    assert_eq!(
        app.store.count_attachments().await.unwrap(),
        0,
        "{what}: no row"
    );
    assert_eq!(
        attachment_files(app),
        Vec::<PathBuf>::new(),
        "{what}: no file"
    );
}

// ---- tests ----------------------------------------------------------------------------------

#[tokio::test]
async fn a_png_and_a_jpeg_are_served_back_byte_identical_with_safe_headers() {
    let (app, session) = app_with_run().await;
    let png = png(4, 3, 0);
    let jpeg = jpeg(800, 600);
    for (n, (name, content_type, bytes, media_type, extension)) in [
        ("scope.png", "image/png", &png, "image/png", "png"),
        ("bench photo.jpg", "image/jpeg", &jpeg, "image/jpeg", "jpg"),
    ]
    .into_iter()
    .enumerate()
    {
        let id = n + 1;
        let answer = post_upload(&app, &session, &Upload::picture(name, content_type, bytes)).await;
        assert_eq!(answer.status, StatusCode::SEE_OTHER, "{}", answer.body);
        assert_eq!(answer.location(), format!("{RUN}#attachment-{id}"));
        let served = get_raw(
            &app,
            &format!("{RUN}/attachments/{id}"),
            Some(&session),
            None,
        )
        .await;
        assert_eq!(served.status, StatusCode::OK);
        assert!(served.bytes == *bytes, "{name} comes back byte for byte");
        let headers = &served.headers;
        assert_eq!(header_of(headers, header::CONTENT_TYPE), media_type);
        assert_eq!(
            header_of(headers, header::CONTENT_DISPOSITION),
            format!("inline; filename=\"attachment-{id}.{extension}\""),
            "a generated name, never the uploader's"
        );
        assert_eq!(
            header_of(headers, header::X_CONTENT_TYPE_OPTIONS),
            "nosniff"
        );
        // Not kept by the browser: nothing of the logbook outlives a sign-out.
        assert_eq!(
            header_of(headers, header::CACHE_CONTROL),
            "private, no-store"
        );
        let etag = header_of(headers, header::ETAG).to_string();
        assert_eq!(etag, format!("\"{}\"", sha256_hex(bytes)));
        let again = get_raw(
            &app,
            &format!("{RUN}/attachments/{id}"),
            Some(&session),
            Some(&etag),
        )
        .await;
        assert_eq!(again.status, StatusCode::NOT_MODIFIED);
        assert!(again.bytes.is_empty());
    }
    assert_eq!(app.store.count_attachments().await.unwrap(), 2);
}

#[tokio::test]
async fn webp_and_gif_are_accepted_by_their_bytes() {
    let (app, session) = app_with_run().await;
    let webp = webp(16, 8);
    for (id, bytes, media_type) in [(1, &webp[..], "image/webp"), (2, GIF, "image/gif")] {
        // The client's name and type say nothing: the bytes decide.
        let answer = post_upload(
            &app,
            &session,
            &Upload::picture("picture.bin", "application/octet-stream", bytes),
        )
        .await;
        assert_eq!(answer.status, StatusCode::SEE_OTHER, "{}", answer.body);
        let served = get_raw(
            &app,
            &format!("{RUN}/attachments/{id}"),
            Some(&session),
            None,
        )
        .await;
        assert_eq!(header_of(&served.headers, header::CONTENT_TYPE), media_type);
        assert!(served.bytes == bytes);
    }
}

#[tokio::test]
async fn the_run_page_shows_scaled_thumbnails_linking_to_the_full_picture() {
    let (app, session) = app_with_run().await;
    let photo = jpeg(1600, 1200);
    let small = png(40, 30, 0);
    for upload in [
        Upload {
            kind: "setup",
            caption: "coil and bank on the bench",
            ..Upload::picture("IMG_0042.JPG", "image/jpeg", &photo)
        },
        Upload {
            kind: "thermal",
            caption: "",
            ..Upload::picture("thermal.png", "image/png", &small)
        },
    ] {
        let answer = post_upload(&app, &session, &upload).await;
        assert_eq!(answer.status, StatusCode::SEE_OTHER, "{}", answer.body);
    }
    let page = app.get(RUN, Some(&session)).await;
    assert_eq!(page.status, StatusCode::OK);
    let photo_img = format!(
        "#attachments ul.gallery li#attachment-1 a[href='{RUN}/attachments/1'] \
         img[src='{RUN}/attachments/1/thumb']"
    );
    assert_eq!(page.count(&photo_img), 1, "{}", page.body);
    assert_eq!(page.attr(&photo_img, "width").as_deref(), Some("320"));
    assert_eq!(page.attr(&photo_img, "height").as_deref(), Some("240"));
    assert_eq!(
        page.attr(&photo_img, "alt").as_deref(),
        Some("coil and bank on the bench")
    );
    assert_eq!(
        page.select_texts("#attachment-1 .kind"),
        vec!["Set-up".to_string()]
    );
    assert_eq!(
        page.select_texts("#attachment-1 .name"),
        vec!["IMG_0042.JPG".to_string()]
    );
    let small_img = format!("#attachment-2 img[src='{RUN}/attachments/2/thumb']");
    assert_eq!(page.attr(&small_img, "width").as_deref(), Some("40"));
    assert_eq!(page.attr(&small_img, "height").as_deref(), Some("30"));
    assert_eq!(
        page.attr(&small_img, "alt").as_deref(),
        Some("Thermal image 2")
    );

    // The photo's thumbnail is a real 320-px JPEG, cached beside the original.
    let thumb = get_raw(
        &app,
        &format!("{RUN}/attachments/1/thumb"),
        Some(&session),
        None,
    )
    .await;
    assert_eq!(thumb.status, StatusCode::OK);
    assert_eq!(
        header_of(&thumb.headers, header::CONTENT_TYPE),
        "image/jpeg"
    );
    assert_eq!(
        header_of(&thumb.headers, header::CONTENT_DISPOSITION),
        "inline; filename=\"attachment-1-thumb.jpg\""
    );
    assert!(thumb.bytes.len() < photo.len());
    let decoded = image::load_from_memory(&thumb.bytes).unwrap();
    assert_eq!((decoded.width(), decoded.height()), (320, 240));
    let hash = sha256_hex(&photo);
    assert!(
        attachment_files(&app).contains(&PathBuf::from(format!(
            "thumbs/{}/{}.jpg",
            &hash[..2],
            &hash[2..]
        ))),
        "{:?}",
        attachment_files(&app)
    );
    // A picture no larger than a thumbnail is served as it is.
    let small_thumb = get_raw(
        &app,
        &format!("{RUN}/attachments/2/thumb"),
        Some(&session),
        None,
    )
    .await;
    assert_eq!(
        header_of(&small_thumb.headers, header::CONTENT_TYPE),
        "image/png"
    );
    assert!(small_thumb.bytes == small);
}

#[tokio::test]
async fn a_sideways_phone_photo_gets_an_upright_thumbnail() {
    let (app, session) = app_with_run().await;
    let photo = sideways_jpeg(1600, 1200);
    let answer = post_upload(
        &app,
        &session,
        &Upload::picture("portrait.jpg", "image/jpeg", &photo),
    )
    .await;
    assert_eq!(answer.status, StatusCode::SEE_OTHER, "{}", answer.body);
    let page = app.get(RUN, Some(&session)).await;
    let img = "#attachment-1 img";
    assert_eq!(page.attr(img, "width").as_deref(), Some("240"));
    assert_eq!(page.attr(img, "height").as_deref(), Some("320"));
    let thumb = get_raw(
        &app,
        &format!("{RUN}/attachments/1/thumb"),
        Some(&session),
        None,
    )
    .await;
    let decoded = image::load_from_memory(&thumb.bytes).unwrap();
    assert_eq!((decoded.width(), decoded.height()), (240, 320));
}

#[tokio::test]
async fn the_upload_form_offers_the_phone_camera_and_carries_the_token() {
    let (app, session) = app_with_run().await;
    let page = app.get(RUN, Some(&session)).await;
    let form = "#attachments form#attach[method=post][enctype='multipart/form-data']";
    assert_eq!(
        page.attr(form, "action"),
        Some(format!("{RUN}/attachments?csrf={}", session.csrf))
    );
    assert_eq!(
        page.count(&format!(
            "{form} input[type=file][name=file][accept='image/*'][capture=environment]"
        )),
        1
    );
    let kinds: Vec<String> = page
        .html()
        .select(&scraper::Selector::parse(&format!("{form} select[name=kind] option")).unwrap())
        .map(|o| o.value().attr("value").unwrap().to_string())
        .collect();
    assert_eq!(kinds, ["setup", "scope", "thermal", "other"]);
    assert_eq!(page.count(&format!("{form} input[name=caption]")), 1);
    assert_eq!(page.count(&format!("{form} button[type=submit].big")), 1);
    // The section sits right before the readings.
    let ids: Vec<String> = page
        .html()
        .select(&scraper::Selector::parse("main > section").unwrap())
        .filter_map(|s| s.value().attr("id").map(str::to_string))
        .collect();
    let at = ids.iter().position(|id| id == "attachments").unwrap();
    assert_eq!(ids.get(at + 1).map(String::as_str), Some("readings"));
}

#[tokio::test]
async fn a_finished_run_still_takes_pictures() {
    let (app, session) = app_with_run().await;
    let finished = app
        .post_form(
            &format!("{RUN}/finish"),
            &session,
            &[("outcome", "completed")],
        )
        .await;
    assert_eq!(finished.status, StatusCode::SEE_OTHER, "{}", finished.body);
    let page = app.get(RUN, Some(&session)).await;
    assert_eq!(page.count("form#attach"), 1);
    let png = png(8, 8, 0);
    let answer = post_upload(
        &app,
        &session,
        &Upload::picture("after.png", "image/png", &png),
    )
    .await;
    assert_eq!(answer.status, StatusCode::SEE_OTHER, "{}", answer.body);
    let page = app.get(RUN, Some(&session)).await;
    assert_eq!(page.count("#attachments li#attachment-1 img"), 1);
}

#[tokio::test]
async fn a_viewer_sees_pictures_but_cannot_attach_them() {
    let (app, editor) = app_with_run().await;
    let picture = png(8, 8, 0);
    post_upload(
        &app,
        &editor,
        &Upload::picture("a.png", "image/png", &picture),
    )
    .await;
    let viewer = app.signed_in("vic", UserRole::Viewer).await;
    let page = app.get(RUN, Some(&viewer)).await;
    assert_eq!(page.count("#attachments li#attachment-1 img"), 1);
    assert_eq!(page.count("form#attach"), 0, "no upload form for a viewer");
    let served = get_raw(&app, &format!("{RUN}/attachments/1"), Some(&viewer), None).await;
    assert_eq!(served.status, StatusCode::OK);

    let other = png(8, 8, 99);
    let refused = post_upload(
        &app,
        &viewer,
        &Upload::picture("b.png", "image/png", &other),
    )
    .await;
    assert_eq!(refused.status, StatusCode::FORBIDDEN);
    assert_eq!(app.store.count_attachments().await.unwrap(), 1);
    assert_eq!(
        attachment_files(&app),
        vec![PathBuf::from(format!(
            "{}/{}",
            &sha256_hex(&picture)[..2],
            &sha256_hex(&picture)[2..]
        ))],
        "only the editor's file"
    );
}

#[tokio::test]
async fn pictures_are_for_signed_in_users_and_only_under_their_own_run() {
    let (app, session) = app_with_run().await;
    let png = png(8, 8, 0);
    post_upload(&app, &session, &Upload::picture("a.png", "image/png", &png)).await;
    let anonymous = get_raw(&app, &format!("{RUN}/attachments/1"), None, None).await;
    assert_eq!(anonymous.status, StatusCode::SEE_OTHER);
    assert!(header_of(&anonymous.headers, header::LOCATION).starts_with("/login"));
    assert!(anonymous.bytes != png);
    let second_run = app
        .post_form(
            "/builds/bench-heater/runs",
            &session,
            &[
                ("revision", "r1"),
                ("load", "none"),
                ("channel", "frequency"),
            ],
        )
        .await;
    let second = second_run.location();
    for path in [
        format!("{second}/attachments/1"),
        format!("{second}/attachments/1/thumb"),
        format!("{RUN}/attachments/2"),
        "/builds/other/runs/1/attachments/1".to_string(),
    ] {
        let answer = get_raw(&app, &path, Some(&session), None).await;
        assert_eq!(answer.status, StatusCode::NOT_FOUND, "{path}");
    }
}

#[tokio::test]
async fn hostile_files_are_refused_and_nothing_is_saved() {
    let (app, session) = app_with_run().await;
    let svg =
        b"<svg xmlns=\"http://www.w3.org/2000/svg\"><script>alert(document.cookie)</script></svg>";
    let html = b"<!doctype html><html><body><script>fetch('/logout',{method:'POST'})</script>";
    let mut damaged = png(64, 64, 0);
    damaged.truncate(60);
    let cases: [(&str, &str, &[u8], StatusCode); 6] = [
        (
            "x.png",
            "image/png",
            b"just some text, named like a picture",
            StatusCode::UNSUPPORTED_MEDIA_TYPE,
        ),
        (
            "drawing.svg",
            "image/svg+xml",
            svg,
            StatusCode::UNSUPPORTED_MEDIA_TYPE,
        ),
        (
            "drawing.png",
            "image/png",
            svg,
            StatusCode::UNSUPPORTED_MEDIA_TYPE,
        ),
        (
            "page.png",
            "image/png",
            html,
            StatusCode::UNSUPPORTED_MEDIA_TYPE,
        ),
        (
            "cut-off.png",
            "image/png",
            &damaged,
            StatusCode::UNPROCESSABLE_ENTITY,
        ),
        (
            "empty.png",
            "image/png",
            b"",
            StatusCode::UNPROCESSABLE_ENTITY,
        ),
    ];
    for (name, content_type, bytes, status) in cases {
        let answer = post_upload(
            &app,
            &session,
            &Upload {
                caption: "kept caption",
                ..Upload::picture(name, content_type, bytes)
            },
        )
        .await;
        assert_eq!(answer.status, status, "{name}: {}", answer.body);
        assert_eq!(answer.count("form#attach p.error#file-error"), 1, "{name}");
        assert_eq!(
            answer
                .attr("form#attach input[name=file]", "aria-invalid")
                .as_deref(),
            Some("true"),
            "{name}"
        );
        assert_eq!(
            answer
                .attr("form#attach input[name=caption]", "value")
                .as_deref(),
            Some("kept caption"),
            "{name}: typed text comes back"
        );
        assert_eq!(
            answer
                .attr("form#attach select[name=kind] option[selected]", "value")
                .as_deref(),
            Some("scope"),
            "{name}"
        );
        assert_nothing_saved(&app, name).await;
    }
}

#[tokio::test]
async fn a_bad_kind_or_caption_is_marked_and_nothing_is_saved() {
    let (app, session) = app_with_run().await;
    let png = png(8, 8, 0);
    let long = "c".repeat(301);
    for (kind, caption, field) in [
        ("", "fine", "kind"),
        ("selfie", "fine", "kind"),
        ("scope", long.as_str(), "caption"),
    ] {
        let answer = post_upload(
            &app,
            &session,
            &Upload {
                kind,
                caption,
                ..Upload::picture("a.png", "image/png", &png)
            },
        )
        .await;
        assert_eq!(answer.status, StatusCode::UNPROCESSABLE_ENTITY, "{field}");
        assert_eq!(
            answer.count(&format!("p.error#{field}-error")),
            1,
            "{field}"
        );
        assert_nothing_saved(&app, field).await;
    }
}

#[tokio::test]
async fn an_oversize_file_is_refused_with_a_clear_message() {
    let (app, session) = app_with_run().await;
    for size in [15 * MIB + 1, 20 * MIB] {
        // A picture's first bytes, so only the size can be the reason.
        let mut big = png(8, 8, 0);
        big.resize(size, 0);
        let answer = post_upload(
            &app,
            &session,
            &Upload::picture("huge.png", "image/png", &big),
        )
        .await;
        assert_eq!(answer.status, StatusCode::PAYLOAD_TOO_LARGE, "{size}");
        let message = answer.select_texts("p.error#file-error");
        assert_eq!(message.len(), 1, "{}", answer.body);
        assert!(message[0].contains("larger than 15 MiB"), "{message:?}");
        assert_nothing_saved(&app, "oversize").await;
    }
}

#[tokio::test]
async fn a_hostile_file_name_never_reaches_the_filesystem() {
    let (app, session) = app_with_run().await;
    let names = [
        ("../../etc/passwd.png", "passwd.png"),
        ("..\\..\\windows\\evil.png", "evil.png"),
        ("/etc/cron.d/job.png", "job.png"),
        // A tab is the one control character a multipart header can carry raw.
        ("scope\t\u{202E}gnp.exe.png", "scopegnp.exe.png"),
    ];
    let mut pictures = Vec::new();
    for (n, (name, shown)) in names.iter().enumerate() {
        let picture = png(8, 8, n as u8);
        let answer = post_upload(
            &app,
            &session,
            &Upload::picture(name, "image/png", &picture),
        )
        .await;
        assert_eq!(
            answer.status,
            StatusCode::SEE_OTHER,
            "{name}: {}",
            answer.body
        );
        let page = app.get(RUN, Some(&session)).await;
        assert_eq!(
            page.select_texts(&format!("#attachment-{} .name", n + 1)),
            vec![shown.to_string()],
            "{name}"
        );
        pictures.push(picture);
    }
    // Other control characters do not even parse as a header: refused, nothing stored.
    let picture = png(8, 8, 200);
    let answer = post_upload(
        &app,
        &session,
        &Upload::picture("x\u{1b}[31m\0.png", "image/png", &picture),
    )
    .await;
    assert_eq!(answer.status, StatusCode::BAD_REQUEST);
    assert_eq!(
        app.store.count_attachments().await.unwrap(),
        names.len() as i64
    );
    // Inside the data directory: the database and files named by hash, nothing else.
    let mut expected: Vec<PathBuf> = pictures
        .iter()
        .map(|p| {
            let hash = sha256_hex(p);
            PathBuf::from("attachments")
                .join(&hash[..2])
                .join(&hash[2..])
        })
        .collect();
    expected.sort();
    let stored: Vec<PathBuf> = files_under(app.data_dir())
        .into_iter()
        .filter(|p| !p.to_string_lossy().starts_with("eddybench.db"))
        .collect();
    assert_eq!(stored, expected);
    // And nothing where the names pointed.
    let outside = app.data_dir().parent().unwrap();
    for path in [
        app.data_dir().join("etc"),
        outside.join("etc/passwd.png"),
        app.data_dir().join("attachments/etc"),
        outside.join("windows"),
    ] {
        assert!(!path.exists(), "{}", path.display());
    }
}

#[tokio::test]
async fn an_upload_without_the_form_token_is_refused() {
    let (app, session) = app_with_run().await;
    let png = png(8, 8, 0);
    let upload = Upload::picture("a.png", "image/png", &png);
    for (token, origin) in [
        (None, ORIGIN),
        (Some("not-the-token"), ORIGIN),
        (Some(session.csrf.as_str()), "http://evil.test"),
    ] {
        let answer = post_upload_with(&app, &session, token, origin, &upload).await;
        assert_eq!(answer.status, StatusCode::BAD_REQUEST, "{token:?} {origin}");
        assert_nothing_saved(&app, "no token").await;
    }
}

#[tokio::test]
async fn the_same_picture_twice_is_one_file_and_two_rows() {
    let (app, session) = app_with_run().await;
    let photo = jpeg(1000, 500);
    for (name, caption) in [("first.jpg", "before"), ("again.jpg", "after")] {
        let answer = post_upload(
            &app,
            &session,
            &Upload {
                caption,
                ..Upload::picture(name, "image/jpeg", &photo)
            },
        )
        .await;
        assert_eq!(answer.status, StatusCode::SEE_OTHER, "{}", answer.body);
    }
    assert_eq!(app.store.count_attachments().await.unwrap(), 2);
    let hash = sha256_hex(&photo);
    assert_eq!(
        attachment_files(&app),
        vec![
            PathBuf::from(format!("{}/{}", &hash[..2], &hash[2..])),
            PathBuf::from(format!("thumbs/{}/{}.jpg", &hash[..2], &hash[2..])),
        ]
    );
    for id in [1, 2] {
        let served = get_raw(
            &app,
            &format!("{RUN}/attachments/{id}"),
            Some(&session),
            None,
        )
        .await;
        assert!(served.bytes == photo);
    }
    let page = app.get(RUN, Some(&session)).await;
    assert_eq!(
        page.select_texts("#attachments .caption"),
        vec!["before".to_string(), "after".to_string()]
    );
}
