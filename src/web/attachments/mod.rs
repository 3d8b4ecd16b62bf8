//! Pictures of a run: taken with the phone's camera at the bench and attached to an open or a
//! finished run, shown as thumbnails on the run page, served to signed-in users.

mod media;

use askama::Template;
use askama_web::WebTemplate;
use axum::extract::multipart::{Field, MultipartError};
use axum::extract::{DefaultBodyLimit, Multipart, Path, State};
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Redirect, Response};
use axum::routing::post;

use crate::store::{
    Attachment, AttachmentFiles, AttachmentId, AttachmentKind, Build, NewAttachment, Run,
    SessionUser,
};
use crate::web::accounts::session::Editor;
use crate::web::chrome::Chrome;
use crate::web::forms::FieldErrors;
use crate::web::reader::Reader;
use crate::web::routes::{Access, Routes};
use crate::web::runs::lookup::{build_and_run, reader_build_and_run};
use crate::web::view::date_time;
use crate::web::{AppError, AppState, Result};
use media::{ImageType, Refusal, THUMBNAIL_PX};

pub fn router() -> Routes {
    Routes::new()
        .post_with(
            "/builds/{slug}/runs/{id}/attachments",
            Access::Editor,
            post(upload).layer(DefaultBodyLimit::max(UPLOAD_BODY_LIMIT_BYTES)),
        )
        .get(
            "/builds/{slug}/runs/{id}/attachments/{attachment}",
            Access::Viewer,
            original,
        )
        .get(
            "/builds/{slug}/runs/{id}/attachments/{attachment}/thumb",
            Access::Viewer,
            thumbnail,
        )
        .get(
            "/s/{slug}/runs/{id}/attachments/{attachment}",
            Access::Share,
            original,
        )
        .get(
            "/s/{slug}/runs/{id}/attachments/{attachment}/thumb",
            Access::Share,
            thumbnail,
        )
}

/// The largest picture a run takes. Phone photos are 2–8 MiB; a raw 50-megapixel one is not a
/// bench record.
pub const MAX_FILE_BYTES: usize = 15 * 1024 * 1024;
/// The whole request: the file and a few small fields. Past this the body is not read at all.
const UPLOAD_BODY_LIMIT_BYTES: usize = MAX_FILE_BYTES + 64 * 1024;
const MAX_CAPTION_CHARS: usize = 300;
const MAX_TEXT_FIELD_BYTES: usize = 4 * MAX_CAPTION_CHARS;
const TOO_LARGE: &str = "this picture is larger than 15 MiB; attach a smaller one (a phone photo \
     at its normal size is well under that)";
const NOT_A_PICTURE: &str = "only JPEG, PNG, WebP or GIF pictures can be attached, and this file \
     is none of them, whatever its name says";
const DAMAGED: &str = "this picture could not be read: it is damaged or was cut off; take or \
     choose it again";

/// One picture in the run page's gallery.
pub struct AttachmentView {
    pub id: i64,
    pub href: String,
    pub thumb_src: String,
    /// Of the thumbnail as shown, when the picture's size is known.
    pub width_px: Option<u32>,
    pub height_px: Option<u32>,
    pub kind: &'static str,
    pub kind_title: &'static str,
    pub caption: String,
    pub alt: String,
    pub original_name: String,
    pub size: String,
    pub uploaded: String,
}

/// The gallery of a run, for the run page.
/// The pictures of a run, linked under `base` (`/builds/{slug}` or a share's `/s/{token}`).
/// Share pages name no accounts, so they pass `show_uploader: false`.
pub async fn views_of_run(
    state: &AppState,
    base: &str,
    run: &Run,
    show_uploader: bool,
) -> Result<Vec<AttachmentView>> {
    let attachments = state.store.attachments_of_run(run.id).await?;
    Ok(attachments
        .iter()
        .map(|a| view(base, run, a, show_uploader))
        .collect())
}

fn view(base: &str, run: &Run, a: &Attachment, show_uploader: bool) -> AttachmentView {
    let kind = AttachmentKind::parse(&a.kind).unwrap_or(AttachmentKind::Other);
    let href = format!("{base}/runs/{}/attachments/{}", run.id, a.id);
    let shown = match (a.width_px, a.height_px) {
        (Some(w), Some(h)) if w > 0 && h > 0 => Some(media::fit_within(
            w.try_into().unwrap_or(u32::MAX),
            h.try_into().unwrap_or(u32::MAX),
            THUMBNAIL_PX,
        )),
        _ => None,
    };
    let uploaded = match a.uploader.as_ref().filter(|_| show_uploader) {
        Some(name) => format!("{} by {name}", date_time(a.uploaded_at)),
        None => date_time(a.uploaded_at),
    };
    AttachmentView {
        id: a.id.0,
        thumb_src: format!("{href}/thumb"),
        href,
        width_px: shown.map(|(w, _)| w),
        height_px: shown.map(|(_, h)| h),
        kind: kind.as_str(),
        kind_title: kind.title(),
        alt: if a.caption.is_empty() {
            format!("{} {}", kind.title(), a.id)
        } else {
            a.caption.clone()
        },
        caption: a.caption.clone(),
        original_name: a.original_name.clone(),
        size: byte_size(a.byte_size),
        uploaded,
    }
}

fn byte_size(bytes: i64) -> String {
    let bytes = bytes as f64;
    if bytes >= 1024.0 * 1024.0 {
        format!("{:.1} MiB", bytes / (1024.0 * 1024.0))
    } else {
        format!("{:.0} KiB", (bytes / 1024.0).max(1.0))
    }
}

/// The upload form shown again when a picture is refused, with what was chosen kept.
#[derive(Template, WebTemplate)]
#[template(path = "runs/attach.html")]
struct AttachPage {
    chrome: Chrome,
    build: Build,
    run: Run,
    kind: String,
    caption: String,
    errors: FieldErrors,
}

/// What the multipart form carried.
#[derive(Default)]
struct Received {
    file_name: String,
    bytes: Option<Vec<u8>>,
    kind: String,
    caption: String,
    too_large: bool,
    errors: FieldErrors,
}

async fn upload(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path((slug, id)): Path<(String, i64)>,
    multipart: Multipart,
) -> Result<Response> {
    let (build, run) = build_and_run(&state, &slug, id).await?;
    let mut received = receive(multipart).await?;
    let kind = AttachmentKind::parse(&received.kind);
    if kind.is_none() {
        received.errors.add("kind", "choose what the picture shows");
    }
    let caption: String = received
        .caption
        .chars()
        .filter(|c| !c.is_control())
        .collect::<String>()
        .trim()
        .to_string();
    if caption.chars().count() > MAX_CAPTION_CHARS {
        received.errors.add(
            "caption",
            format!("keep the caption under {MAX_CAPTION_CHARS} characters"),
        );
    }
    let bytes = match received.bytes.take() {
        Some(bytes) if !bytes.is_empty() => bytes,
        _ if received.too_large => Vec::new(),
        _ => {
            received
                .errors
                .add("file", "choose a picture, or take one, to attach");
            Vec::new()
        }
    };
    let status = if received.too_large {
        StatusCode::PAYLOAD_TOO_LARGE
    } else {
        StatusCode::UNPROCESSABLE_ENTITY
    };
    let kind = match kind {
        Some(kind) if received.errors.is_empty() => kind,
        _ => return Ok(refused(status, user, build, run, received)),
    };
    let (bytes, examined) = tokio::task::spawn_blocking(move || {
        let examined = media::examine(&bytes);
        (bytes, examined)
    })
    .await
    .map_err(|e| AppError::Internal(e.into()))?;
    let examined = match examined {
        Ok(examined) => examined,
        Err(refusal) => {
            let (status, message) = match refusal {
                Refusal::NotAPicture => (StatusCode::UNSUPPORTED_MEDIA_TYPE, NOT_A_PICTURE),
                Refusal::Damaged => (StatusCode::UNPROCESSABLE_ENTITY, DAMAGED),
            };
            received.errors.add("file", message);
            return Ok(refused(status, user, build, run, received));
        }
    };
    let files = AttachmentFiles::in_data_dir(&state.config.data_dir);
    let byte_size = bytes.len() as i64;
    let thumbnail = examined.thumbnail;
    let stored = tokio::task::spawn_blocking(move || -> std::io::Result<_> {
        let stored = files.save_original(&bytes)?;
        if let Some(thumbnail) = thumbnail {
            files.save_thumbnail(&stored.sha256, &thumbnail)?;
        }
        Ok(stored)
    })
    .await
    .map_err(|e| AppError::Internal(e.into()))?
    .map_err(|e| AppError::Internal(anyhow::Error::new(e).context("storing an attachment")))?;
    let attachment = state
        .store
        .add_attachment(&NewAttachment {
            run_id: run.id,
            sha256: &stored.sha256,
            media_type: examined.image_type.media_type(),
            byte_size,
            width_px: examined.size_px.map(|(w, _)| w.into()),
            height_px: examined.size_px.map(|(_, h)| h.into()),
            original_name: &received.file_name,
            caption: &caption,
            kind,
            uploaded_by: Some(user.user_id),
        })
        .await?;
    tracing::info!(
        run = %run.id,
        %attachment,
        sha256 = %stored.sha256,
        deduplicated = !stored.newly_written,
        "picture attached"
    );
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}#attachment-{attachment}")).into_response())
}

fn refused(
    status: StatusCode,
    user: SessionUser,
    build: Build,
    run: Run,
    received: Received,
) -> Response {
    let page = AttachPage {
        chrome: Chrome::new(format!("Attach a picture to run {}", run.id), &user),
        build,
        run,
        kind: received.kind,
        caption: received.caption.chars().take(MAX_CAPTION_CHARS).collect(),
        errors: received.errors,
    };
    (status, page).into_response()
}

/// Reads the form while it streams in, keeping at most `MAX_FILE_BYTES` of the file. A larger
/// file is read to its end (up to the body limit) and dropped, so the browser gets the answer
/// instead of a reset connection.
async fn receive(mut multipart: Multipart) -> Result<Received> {
    let mut received = Received::default();
    loop {
        let mut field = match multipart.next_field().await {
            Ok(Some(field)) => field,
            Ok(None) => break,
            Err(error) => return unreadable(error, received),
        };
        match field.name() {
            Some("file") => {
                if received.bytes.is_some() {
                    received.errors.add("file", "attach one picture at a time");
                }
                received.file_name = media::display_name(field.file_name().unwrap_or(""));
                let mut bytes = Vec::new();
                loop {
                    match field.chunk().await {
                        Ok(Some(chunk)) if !received.too_large => {
                            if bytes.len() + chunk.len() > MAX_FILE_BYTES {
                                received.too_large = true;
                                received.errors.add("file", TOO_LARGE);
                                bytes = Vec::new();
                            } else {
                                bytes.extend_from_slice(&chunk);
                            }
                        }
                        Ok(Some(_)) => {}
                        Ok(None) => break,
                        Err(error) => return unreadable(error, received),
                    }
                }
                received.bytes = Some(bytes);
            }
            Some("kind") => received.kind = text(field, "kind", &mut received.errors).await?,
            Some("caption") => {
                received.caption = text(field, "caption", &mut received.errors).await?;
            }
            _ => {}
        }
    }
    Ok(received)
}

/// A small text field; one longer than `MAX_TEXT_FIELD_BYTES` is marked, not kept.
async fn text(mut field: Field<'_>, name: &str, errors: &mut FieldErrors) -> Result<String> {
    let mut bytes = Vec::new();
    while let Some(chunk) = field.chunk().await.map_err(bad_form)? {
        if bytes.len() + chunk.len() > MAX_TEXT_FIELD_BYTES {
            errors.add(name, "this is far too long");
            return Ok(String::new());
        }
        bytes.extend_from_slice(&chunk);
    }
    String::from_utf8(bytes).map_err(|_| AppError::BadRequest("the form is not valid text".into()))
}

/// The body stopped making sense or passed the body limit: the latter is a picture too large.
fn unreadable(error: MultipartError, mut received: Received) -> Result<Received> {
    if error.status() == StatusCode::PAYLOAD_TOO_LARGE {
        received.too_large = true;
        received.bytes = None;
        received.errors.add("file", TOO_LARGE);
        Ok(received)
    } else {
        Err(bad_form(error))
    }
}

fn bad_form(error: MultipartError) -> AppError {
    tracing::info!(%error, "unreadable upload");
    AppError::BadRequest("the upload could not be read; try again".into())
}

/// A picture of this run of this build.
async fn find(
    state: &AppState,
    reader: &Reader,
    slug: &str,
    id: i64,
    attachment: i64,
) -> Result<Attachment> {
    let (_, run) = reader_build_and_run(state, reader, slug, id).await?;
    Ok(state
        .store
        .attachment_of_run(run.id, AttachmentId(attachment))
        .await?)
}

async fn original(
    State(state): State<AppState>,
    reader: Reader,
    Path((slug, id, attachment)): Path<(String, i64, i64)>,
    request_headers: HeaderMap,
) -> Result<Response> {
    let attachment = find(&state, &reader, &slug, id, attachment).await?;
    let image_type = stored_type(&attachment)?;
    let etag = format!("\"{}\"", attachment.sha256);
    if not_modified(&request_headers, &etag) {
        return Ok(picture_headers(
            StatusCode::NOT_MODIFIED,
            image_type,
            &attachment,
            "",
            &etag,
        ));
    }
    let bytes = AttachmentFiles::in_data_dir(&state.config.data_dir)
        .read_original(&attachment.sha256)
        .await
        .map_err(|e| missing_file(e, &attachment))?;
    let mut response = picture_headers(StatusCode::OK, image_type, &attachment, "", &etag);
    *response.body_mut() = bytes.into();
    Ok(response)
}

/// The thumbnail, or the picture itself where there is none (small pictures, GIFs): the page
/// scales it with CSS either way.
async fn thumbnail(
    State(state): State<AppState>,
    reader: Reader,
    Path((slug, id, attachment)): Path<(String, i64, i64)>,
    request_headers: HeaderMap,
) -> Result<Response> {
    let attachment = find(&state, &reader, &slug, id, attachment).await?;
    let files = AttachmentFiles::in_data_dir(&state.config.data_dir);
    let thumbnail = files
        .read_thumbnail(&attachment.sha256)
        .await
        .map_err(|e| missing_file(e, &attachment))?;
    let (image_type, suffix, etag) = match &thumbnail {
        Some(_) => (
            ImageType::Jpeg,
            "-thumb",
            format!("\"{}-thumb\"", attachment.sha256),
        ),
        None => (
            stored_type(&attachment)?,
            "",
            format!("\"{}\"", attachment.sha256),
        ),
    };
    if not_modified(&request_headers, &etag) {
        return Ok(picture_headers(
            StatusCode::NOT_MODIFIED,
            image_type,
            &attachment,
            suffix,
            &etag,
        ));
    }
    let bytes = match thumbnail {
        Some(bytes) => bytes,
        None => files
            .read_original(&attachment.sha256)
            .await
            .map_err(|e| missing_file(e, &attachment))?,
    };
    let mut response = picture_headers(StatusCode::OK, image_type, &attachment, suffix, &etag);
    *response.body_mut() = bytes.into();
    Ok(response)
}

fn stored_type(attachment: &Attachment) -> Result<ImageType> {
    ImageType::from_media_type(&attachment.media_type).ok_or_else(|| {
        AppError::Internal(anyhow::anyhow!(
            "attachment {} has media type {:?}",
            attachment.id,
            attachment.media_type
        ))
    })
}

fn missing_file(error: std::io::Error, attachment: &Attachment) -> AppError {
    AppError::Internal(anyhow::Error::new(error).context(format!(
        "reading the file of attachment {} ({})",
        attachment.id, attachment.sha256
    )))
}

fn not_modified(request_headers: &HeaderMap, etag: &str) -> bool {
    request_headers
        .get_all(header::IF_NONE_MATCH)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(','))
        .any(|tag| tag.trim() == etag)
}

/// The headers of a served picture: the type found in its bytes, a file name we made (never the
/// uploader's), no sniffing, and a day in the browser's own cache (the bytes of an address never
/// change: it names one file by its hash).
fn picture_headers(
    status: StatusCode,
    image_type: ImageType,
    attachment: &Attachment,
    suffix: &str,
    etag: &str,
) -> Response {
    let file_name = format!(
        "attachment-{}{suffix}.{}",
        attachment.id,
        image_type.extension()
    );
    let mut response = status.into_response();
    let headers = response.headers_mut();
    headers.insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static(image_type.media_type()),
    );
    headers.insert(
        header::CONTENT_DISPOSITION,
        HeaderValue::try_from(format!("inline; filename=\"{file_name}\""))
            .expect("generated names are plain ASCII"),
    );
    headers.insert(
        header::X_CONTENT_TYPE_OPTIONS,
        HeaderValue::from_static("nosniff"),
    );
    headers.insert(
        header::CACHE_CONTROL,
        HeaderValue::from_static("private, max-age=86400"),
    );
    headers.insert(
        header::ETAG,
        HeaderValue::try_from(etag).expect("hex digests are plain ASCII"),
    );
    response
}
