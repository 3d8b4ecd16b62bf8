//! What an uploaded file is, judged by its bytes (never by its name or the Content-Type the
//! client sent), its size as shown, its thumbnail, and a name safe to display.

use std::io::Cursor;

use image::codecs::jpeg::JpegEncoder;
use image::metadata::Orientation;
use image::{DynamicImage, ImageDecoder, ImageError, ImageFormat, ImageReader, Limits};

/// The longest side of a thumbnail, in pixels: two columns on a phone at twice its density.
pub const THUMBNAIL_PX: u32 = 320;
const THUMBNAIL_JPEG_QUALITY: u8 = 80;
/// Pictures larger than this (a side, or the memory to decode them) are kept without a
/// thumbnail rather than decoded: a small file can unpack to gigabytes of pixels.
const DECODE_MAX_SIDE_PX: u32 = 16_384;
/// Pixels decoded at most, checked from the header before any pixel is unpacked: a 12 MP phone
/// photo decodes (about 36 MB of RGB), a 9,000 x 9,000 PNG of a few hundred KB does not.
const DECODE_MAX_PIXELS: u64 = 24_000_000;
const DECODE_MAX_ALLOC_BYTES: u64 = 96 * 1024 * 1024;

/// The picture formats a run accepts. SVG is not among them: it can carry script.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ImageType {
    Jpeg,
    Png,
    Webp,
    Gif,
}

impl ImageType {
    /// The format announced by the file's first bytes (its magic number), if it is one we take.
    pub fn sniff(bytes: &[u8]) -> Option<ImageType> {
        if bytes.starts_with(&[0xFF, 0xD8, 0xFF]) {
            Some(ImageType::Jpeg)
        } else if bytes.starts_with(b"\x89PNG\r\n\x1a\n") {
            Some(ImageType::Png)
        } else if bytes.starts_with(b"GIF87a") || bytes.starts_with(b"GIF89a") {
            Some(ImageType::Gif)
        } else if bytes.len() >= 16
            && &bytes[0..4] == b"RIFF"
            && &bytes[8..12] == b"WEBP"
            && matches!(&bytes[12..16], b"VP8 " | b"VP8L" | b"VP8X")
        {
            Some(ImageType::Webp)
        } else {
            None
        }
    }

    pub fn media_type(self) -> &'static str {
        match self {
            ImageType::Jpeg => "image/jpeg",
            ImageType::Png => "image/png",
            ImageType::Webp => "image/webp",
            ImageType::Gif => "image/gif",
        }
    }

    pub fn from_media_type(media_type: &str) -> Option<ImageType> {
        [
            ImageType::Jpeg,
            ImageType::Png,
            ImageType::Webp,
            ImageType::Gif,
        ]
        .into_iter()
        .find(|t| t.media_type() == media_type)
    }

    pub fn extension(self) -> &'static str {
        match self {
            ImageType::Jpeg => "jpg",
            ImageType::Png => "png",
            ImageType::Webp => "webp",
            ImageType::Gif => "gif",
        }
    }
}

/// A picture that passed the checks.
#[derive(Debug)]
pub struct Examined {
    pub image_type: ImageType,
    /// As shown, after the camera's orientation tag; `None` when it could not be read cheaply.
    pub size_px: Option<(u32, u32)>,
    /// A JPEG at most `THUMBNAIL_PX` a side, when the picture is larger than that and decodable.
    pub thumbnail: Option<Vec<u8>>,
}

/// Why a file is refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Refusal {
    /// Not JPEG, PNG, WebP or GIF by its first bytes (text, SVG, HTML, a document...).
    NotAPicture,
    /// Starts like a picture but cannot be read: damaged or cut off.
    Damaged,
}

/// Checks a file by its content and makes its thumbnail. CPU-bound: call from a blocking task.
pub fn examine(bytes: &[u8]) -> Result<Examined, Refusal> {
    let image_type = ImageType::sniff(bytes).ok_or(Refusal::NotAPicture)?;
    let format = match image_type {
        ImageType::Jpeg => ImageFormat::Jpeg,
        ImageType::Png => ImageFormat::Png,
        ImageType::Webp => ImageFormat::WebP,
        // No GIF decoder is built in: the header gives the size, the browser scales the picture.
        ImageType::Gif => {
            return Ok(Examined {
                image_type,
                size_px: Some(gif_size_px(bytes).ok_or(Refusal::Damaged)?),
                thumbnail: None,
            });
        }
    };
    let mut reader = ImageReader::with_format(Cursor::new(bytes), format);
    reader.limits(decode_limits());
    let mut decoder = match reader.into_decoder() {
        Ok(decoder) => decoder,
        Err(error) => return without_thumbnail(image_type, None, error),
    };
    let orientation = decoder.orientation().unwrap_or(Orientation::NoTransforms);
    let (width, height) = decoder.dimensions();
    let size_px = if swaps_sides(orientation) {
        (height, width)
    } else {
        (width, height)
    };
    if width == 0 || height == 0 {
        return Err(Refusal::Damaged);
    }
    if u64::from(width) * u64::from(height) > DECODE_MAX_PIXELS {
        return Ok(Examined {
            image_type,
            size_px: Some(size_px),
            thumbnail: None,
        });
    }
    let mut picture = match DynamicImage::from_decoder(decoder) {
        Ok(picture) => picture,
        Err(error) => return without_thumbnail(image_type, Some(size_px), error),
    };
    let (width, height) = size_px;
    let thumbnail = if width.max(height) > THUMBNAIL_PX {
        picture.apply_orientation(orientation);
        Some(thumbnail_jpeg(
            &picture,
            fit_within(width, height, THUMBNAIL_PX),
        ))
    } else {
        None
    };
    Ok(Examined {
        image_type,
        size_px: Some(size_px),
        thumbnail,
    })
}

/// A picture our decoder will not unpack (too large, or a rare variant it lacks) is still a
/// picture of the right type: keep it without a thumbnail. Anything else is a damaged file.
fn without_thumbnail(
    image_type: ImageType,
    size_px: Option<(u32, u32)>,
    error: ImageError,
) -> Result<Examined, Refusal> {
    match error {
        ImageError::Limits(_) | ImageError::Unsupported(_) => Ok(Examined {
            image_type,
            size_px,
            thumbnail: None,
        }),
        _ => Err(Refusal::Damaged),
    }
}

fn decode_limits() -> Limits {
    let mut limits = Limits::default();
    limits.max_image_width = Some(DECODE_MAX_SIDE_PX);
    limits.max_image_height = Some(DECODE_MAX_SIDE_PX);
    limits.max_alloc = Some(DECODE_MAX_ALLOC_BYTES);
    limits
}

fn swaps_sides(orientation: Orientation) -> bool {
    matches!(
        orientation,
        Orientation::Rotate90
            | Orientation::Rotate270
            | Orientation::Rotate90FlipH
            | Orientation::Rotate270FlipH
    )
}

/// The logical screen size of a GIF (bytes 6..10, little-endian).
fn gif_size_px(bytes: &[u8]) -> Option<(u32, u32)> {
    let header = bytes.get(6..10)?;
    let width = u16::from_le_bytes([header[0], header[1]]) as u32;
    let height = u16::from_le_bytes([header[2], header[3]]) as u32;
    (width > 0 && height > 0).then_some((width, height))
}

/// The size that fits a picture within a square of `box_px`, keeping its proportions and
/// never enlarging it. The page's width and height attributes use the same numbers.
pub fn fit_within(width: u32, height: u32, box_px: u32) -> (u32, u32) {
    if width <= box_px && height <= box_px {
        return (width, height);
    }
    let scale = |side: u32, long: u32| {
        ((side as u64 * box_px as u64 + long as u64 / 2) / long as u64).max(1) as u32
    };
    if width >= height {
        (box_px, scale(height, width))
    } else {
        (scale(width, height), box_px)
    }
}

/// A JPEG of the picture at `size`; transparency is laid on white, the colour of the page.
fn thumbnail_jpeg(picture: &DynamicImage, (width, height): (u32, u32)) -> Vec<u8> {
    let small = picture.thumbnail_exact(width, height);
    let rgb = if small.color().has_alpha() {
        let mut rgba = small.to_rgba8();
        for pixel in rgba.pixels_mut() {
            let alpha = pixel[3] as u32;
            for channel in 0..3 {
                pixel[channel] =
                    ((pixel[channel] as u32 * alpha + 255 * (255 - alpha)) / 255) as u8;
            }
            pixel[3] = 255;
        }
        DynamicImage::ImageRgba8(rgba).to_rgb8()
    } else {
        small.to_rgb8()
    };
    let mut out = Vec::new();
    JpegEncoder::new_with_quality(&mut out, THUMBNAIL_JPEG_QUALITY)
        .encode_image(&rgb)
        .expect("encoding RGB pixels into memory cannot fail");
    out
}

/// The name a file had on the phone, made safe to show: the last path component only, no
/// control or direction-changing characters, no leading dots, at most 120 characters. It is
/// never used to build a path.
pub fn display_name(raw: &str) -> String {
    let last = raw.rsplit(['/', '\\']).next().unwrap_or("");
    let cleaned: String = last
        .chars()
        .filter(|c| !c.is_control() && !is_invisible_format(*c))
        .collect();
    let trimmed = cleaned.trim().trim_start_matches('.').trim();
    trimmed.chars().take(120).collect()
}

/// Characters that reorder or hide text (`photo\u{202E}gnp.exe` shows as `photoexe.png`).
fn is_invisible_format(c: char) -> bool {
    matches!(c, '\u{200B}'..='\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}' | '\u{FEFF}')
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sniffing_goes_by_the_first_bytes() {
        assert_eq!(
            ImageType::sniff(b"\xFF\xD8\xFF\xE0rest"),
            Some(ImageType::Jpeg)
        );
        assert_eq!(
            ImageType::sniff(b"\x89PNG\r\n\x1a\nrest"),
            Some(ImageType::Png)
        );
        assert_eq!(ImageType::sniff(b"GIF89a\x01\x00"), Some(ImageType::Gif));
        assert_eq!(
            ImageType::sniff(b"RIFF\x10\x00\x00\x00WEBPVP8L...."),
            Some(ImageType::Webp)
        );
        for refused in [
            &b"<svg xmlns='http://www.w3.org/2000/svg'><script>alert(1)</script></svg>"[..],
            b"<!doctype html><script>alert(1)</script>",
            b"just text, named x.png",
            b"RIFF\x10\x00\x00\x00WAVEfmt ",
            b"\x89PNG",
            b"",
        ] {
            assert_eq!(ImageType::sniff(refused), None);
        }
    }

    #[test]
    fn a_small_file_of_too_many_pixels_is_kept_without_being_decoded() {
        // 5,000 x 5,000 grey pixels: 25 MP, over the limit, yet a PNG of about 130 KB.
        let picture = image::GrayImage::new(5_000, 5_000);
        let mut png = Vec::new();
        picture
            .write_to(&mut Cursor::new(&mut png), ImageFormat::Png)
            .unwrap();
        assert!(png.len() < 200_000, "{} bytes", png.len());
        let examined = examine(&png).unwrap();
        assert_eq!(examined.size_px, Some((5_000, 5_000)));
        assert!(examined.thumbnail.is_none());
    }

    #[test]
    fn a_picture_fits_the_thumbnail_square_without_enlarging() {
        assert_eq!(fit_within(4000, 3000, 320), (320, 240));
        assert_eq!(fit_within(3000, 4000, 320), (240, 320));
        assert_eq!(fit_within(100, 50, 320), (100, 50));
        assert_eq!(fit_within(10_000, 1, 320), (320, 1));
    }

    #[test]
    fn display_names_lose_paths_and_control_characters() {
        assert_eq!(display_name("../../etc/passwd.png"), "passwd.png");
        assert_eq!(display_name("C:\\Users\\me\\scope.png"), "scope.png");
        assert_eq!(display_name("a\0b\r\n\u{7f}.jpg"), "ab.jpg");
        assert_eq!(display_name("photo\u{202E}gnp.exe"), "photognp.exe");
        assert_eq!(display_name(".."), "");
        assert_eq!(display_name(".hidden.png"), "hidden.png");
        assert_eq!(display_name(&"x".repeat(500)).chars().count(), 120);
    }
}
