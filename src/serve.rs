//! A small static HTTP/1.1 server for the page in `www/`, so the page, its worker and the WASM
//! module can be opened from `http://127.0.0.1:<port>/` (browsers refuse module workers and
//! `application/wasm` streaming from `file://`).
//!
//! It owns nothing but the mapping from a request target to a file under one root directory,
//! plus the optional extra feed zips given on the command line, which it serves at
//! `/feeds/<file name>` together with a generated `/feeds/index.json` listing them.
//!
//! Built on `std` only, on purpose: it is a local tool for one user (a kiosk, an officer's
//! laptop), not a production web server, so one thread per connection and `Connection: close`
//! after every response keep it short and obviously correct. It binds to 127.0.0.1 only, answers
//! GET and HEAD only, never lists directories, never serves dot-files, and rejects any target whose
//! percent-decoded path has a `..` segment, a backslash or a NUL byte. Every response carries
//! `Cache-Control: no-cache` so a rebuilt `www/pkg/` is picked up on reload.

use std::fs::File;
use std::io::{self, BufRead, BufReader, Read, Write};
use std::net::{Shutdown, TcpListener, TcpStream};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::thread;
use std::time::Duration;

/// Largest request head (request line and headers) we accept.
const MAX_HEAD_BYTES: usize = 16 * 1024;

/// Serves `root` at `http://127.0.0.1:<port>/` until the process ends.
///
/// `feeds` are extra GTFS zips served at `/feeds/<file name>`; when any are given,
/// `/feeds/index.json` is generated from them (`name` = file stem) instead of being read from
/// `root`. Port 0 asks the system for a free port; the line printed once listening names the
/// real one: `timeweave: serving <root> at http://127.0.0.1:<port>/`.
pub fn serve(root: &Path, port: u16, feeds: &[PathBuf]) -> io::Result<()> {
    let listener = TcpListener::bind(("127.0.0.1", port))?;
    let bound = listener.local_addr()?.port();
    println!("timeweave: serving {} at http://127.0.0.1:{}/", root.display(), bound);
    io::stdout().flush()?;
    serve_on(listener, root, feeds)
}

/// Accept loop on an already bound listener (split from [`serve`] so tests can bind port 0).
fn serve_on(listener: TcpListener, root: &Path, feeds: &[PathBuf]) -> io::Result<()> {
    let site = Arc::new(Site::new(root, feeds));
    for stream in listener.incoming() {
        match stream {
            Ok(stream) => {
                let site = Arc::clone(&site);
                thread::spawn(move || {
                    // A client that goes away mid-response is not our error to report.
                    let _ = handle(stream, &site);
                });
            }
            Err(e) => eprintln!("timeweave: accept failed: {e}"),
        }
    }
    Ok(())
}

/// What the server can answer: the root directory and the extra feeds.
struct Site {
    root: PathBuf,
    /// (file name as served under `/feeds/`, path on disk)
    feeds: Vec<(String, PathBuf)>,
    /// Generated `/feeds/index.json`, present only when extra feeds were given.
    feed_index: Option<String>,
}

impl Site {
    fn new(root: &Path, feeds: &[PathBuf]) -> Site {
        let feeds: Vec<(String, PathBuf)> = feeds
            .iter()
            .filter_map(|p| {
                let name = p.file_name()?.to_str()?.to_string();
                Some((name, p.clone()))
            })
            .collect();
        let feed_index = if feeds.is_empty() { None } else { Some(feed_index_json(&feeds)) };
        Site { root: root.to_path_buf(), feeds, feed_index }
    }
}

/// What a request target resolved to.
#[derive(Debug, PartialEq, Eq)]
enum Target {
    /// A file (or a directory, answered with its `index.html`) under the root.
    Path(Vec<String>),
    /// One of the `--feed` files, by its index in `Site::feeds`.
    Feed(usize),
    /// The generated feed list.
    FeedIndex,
}

/// Why a request target was refused.
#[derive(Debug, PartialEq, Eq)]
enum Refusal {
    BadRequest(&'static str),
    NotFound,
}

struct Response {
    status: u16,
    reason: &'static str,
    content_type: &'static str,
    body: Body,
    allow: bool,
}

enum Body {
    Bytes(Vec<u8>),
    File(File, u64),
}

impl Response {
    fn text(status: u16, reason: &'static str, text: &str) -> Response {
        Response {
            status,
            reason,
            content_type: "text/plain; charset=utf-8",
            body: Body::Bytes(format!("{status} {reason}: {text}\n").into_bytes()),
            allow: status == 405,
        }
    }
}

fn handle(stream: TcpStream, site: &Site) -> io::Result<()> {
    stream.set_read_timeout(Some(Duration::from_secs(15)))?;
    stream.set_write_timeout(Some(Duration::from_secs(60)))?;
    let mut reader = BufReader::new(stream.try_clone()?);
    let mut out = stream;
    let result = exchange(&mut reader, &mut out, site);
    // Close gracefully: stop writing, then drain what the client may still be sending, so the
    // kernel does not answer unread bytes with a reset that could discard our response.
    let _ = out.shutdown(Shutdown::Write);
    let _ = out.set_read_timeout(Some(Duration::from_millis(500)));
    let _ = io::copy(&mut reader.take(1 << 20), &mut io::sink());
    result
}

fn exchange(reader: &mut BufReader<TcpStream>, out: &mut TcpStream, site: &Site) -> io::Result<()> {
    let (method, target) = match read_head(reader) {
        Ok(Some(head)) => head,
        Ok(None) => return Ok(()),
        Err(HeadError::TooLarge) => {
            return respond(out, false, Response::text(431, "Request Header Fields Too Large", "request head too large"));
        }
        Err(HeadError::Malformed(why)) => {
            return respond(out, false, Response::text(400, "Bad Request", why));
        }
        Err(HeadError::Io(e)) => return Err(e),
    };
    let head_only = method == "HEAD";
    let response = if method != "GET" && method != "HEAD" {
        Response::text(405, "Method Not Allowed", "only GET and HEAD are served")
    } else {
        answer(site, &target)
    };
    respond(out, head_only, response)
}

enum HeadError {
    TooLarge,
    Malformed(&'static str),
    Io(io::Error),
}

/// Reads the request line and headers; returns (method, target), or `None` if the client closed
/// the connection before sending anything. Bodies are not read: GET and HEAD have none that we
/// use, and the connection is closed after the response.
fn read_head(reader: &mut impl BufRead) -> Result<Option<(String, String)>, HeadError> {
    let mut total = 0usize;
    let mut request_line: Option<String> = None;
    loop {
        let mut line = Vec::new();
        let n = reader
            .by_ref()
            .take((MAX_HEAD_BYTES - total + 1) as u64)
            .read_until(b'\n', &mut line)
            .map_err(HeadError::Io)?;
        if n == 0 {
            return match request_line {
                None => Ok(None),
                Some(_) => Err(HeadError::Malformed("request head ended early")),
            };
        }
        total += n;
        if total > MAX_HEAD_BYTES {
            return Err(HeadError::TooLarge);
        }
        if !line.ends_with(b"\n") {
            return Err(HeadError::Malformed("request head ended early"));
        }
        let text = std::str::from_utf8(&line)
            .map_err(|_| HeadError::Malformed("request head is not UTF-8"))?
            .trim_end_matches(['\r', '\n']);
        match &request_line {
            None => {
                if text.is_empty() {
                    continue; // tolerate a stray CRLF before the request line (RFC 9112 §2.2)
                }
                request_line = Some(text.to_string());
            }
            Some(_) => {
                if text.is_empty() {
                    break;
                }
            }
        }
    }
    let line = request_line.unwrap_or_default();
    let mut parts = line.split(' ');
    let (Some(method), Some(target), Some(version), None) = (parts.next(), parts.next(), parts.next(), parts.next()) else {
        return Err(HeadError::Malformed("request line is not METHOD TARGET HTTP/1.x"));
    };
    if !version.starts_with("HTTP/1.") {
        return Err(HeadError::Malformed("only HTTP/1.x is spoken"));
    }
    if method.is_empty() || !method.bytes().all(|b| b.is_ascii_uppercase()) {
        return Err(HeadError::Malformed("method is not an upper-case token"));
    }
    Ok(Some((method.to_string(), target.to_string())))
}

/// Resolves a target and opens what it names.
fn answer(site: &Site, target: &str) -> Response {
    let resolved = match resolve(target, site) {
        Ok(t) => t,
        Err(Refusal::BadRequest(why)) => return Response::text(400, "Bad Request", why),
        Err(Refusal::NotFound) => return Response::text(404, "Not Found", "no such file"),
    };
    match resolved {
        Target::FeedIndex => Response {
            status: 200,
            reason: "OK",
            content_type: mime_for("index.json"),
            body: Body::Bytes(site.feed_index.clone().unwrap_or_default().into_bytes()),
            allow: false,
        },
        Target::Feed(i) => open_file(&site.feeds[i].1),
        Target::Path(segments) => {
            let mut path = site.root.clone();
            for s in &segments {
                path.push(s);
            }
            if path.is_dir() {
                path.push("index.html");
            }
            open_file(&path)
        }
    }
}

fn open_file(path: &Path) -> Response {
    let file = match File::open(path) {
        Ok(f) => f,
        Err(_) => return Response::text(404, "Not Found", "no such file"),
    };
    let len = match file.metadata() {
        Ok(m) if m.is_file() => m.len(),
        _ => return Response::text(404, "Not Found", "no such file"),
    };
    let name = path.file_name().and_then(|n| n.to_str()).unwrap_or("");
    Response { status: 200, reason: "OK", content_type: mime_for(name), body: Body::File(file, len), allow: false }
}

fn respond(out: &mut TcpStream, head_only: bool, response: Response) -> io::Result<()> {
    let len = match &response.body {
        Body::Bytes(b) => b.len() as u64,
        Body::File(_, len) => *len,
    };
    let mut head = format!(
        "HTTP/1.1 {} {}\r\nContent-Type: {}\r\nContent-Length: {}\r\nCache-Control: no-cache\r\n\
         X-Content-Type-Options: nosniff\r\nReferrer-Policy: no-referrer\r\nConnection: close\r\n",
        response.status, response.reason, response.content_type, len
    );
    if response.allow {
        head.push_str("Allow: GET, HEAD\r\n");
    }
    head.push_str("\r\n");
    out.write_all(head.as_bytes())?;
    if !head_only {
        match response.body {
            Body::Bytes(b) => out.write_all(&b)?,
            Body::File(f, len) => {
                io::copy(&mut f.take(len), out)?;
            }
        }
    }
    out.flush()
}

/// Maps a request target to what it names, refusing anything that could leave the root.
fn resolve(target: &str, site: &Site) -> Result<Target, Refusal> {
    let segments = safe_segments(target)?;
    if site.feed_index.is_some() && segments.len() == 2 && segments[0] == "feeds" {
        if segments[1] == "index.json" {
            return Ok(Target::FeedIndex);
        }
        if let Some(i) = site.feeds.iter().position(|(name, _)| *name == segments[1]) {
            return Ok(Target::Feed(i));
        }
    }
    Ok(Target::Path(segments))
}

/// Splits a request target's path into percent-decoded segments that are safe to join under a
/// root: no `..` or `.`, no dot-files, no backslash, no NUL, no drive or scheme colon tricks.
fn safe_segments(target: &str) -> Result<Vec<String>, Refusal> {
    let path = target.split(['?', '#']).next().unwrap_or("");
    if !path.starts_with('/') {
        return Err(Refusal::BadRequest("target must be an absolute path"));
    }
    let mut segments = Vec::new();
    // Split before decoding so an encoded "%2F" cannot forge a segment boundary, then check each
    // decoded segment on its own (so "%2e%2e" is still caught).
    for raw in path.split('/') {
        if raw.is_empty() {
            continue;
        }
        let bytes = percent_decode(raw).ok_or(Refusal::BadRequest("bad percent-encoding in path"))?;
        let seg = String::from_utf8(bytes).map_err(|_| Refusal::BadRequest("path is not UTF-8"))?;
        if seg == ".." || seg == "." {
            return Err(Refusal::BadRequest("path may not contain '..' or '.' segments"));
        }
        if seg.contains(['/', '\\', '\0', ':']) {
            return Err(Refusal::BadRequest("path segment has a forbidden character"));
        }
        if seg.starts_with('.') {
            return Err(Refusal::NotFound);
        }
        segments.push(seg);
    }
    Ok(segments)
}

/// Decodes `%XX` escapes (RFC 3986 §2.1); `None` when an escape is malformed.
fn percent_decode(s: &str) -> Option<Vec<u8>> {
    let bytes = s.as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        if bytes[i] == b'%' {
            let hex = bytes.get(i + 1..i + 3)?;
            let hi = (hex[0] as char).to_digit(16)?;
            let lo = (hex[1] as char).to_digit(16)?;
            out.push((hi * 16 + lo) as u8);
            i += 3;
        } else {
            out.push(bytes[i]);
            i += 1;
        }
    }
    Some(out)
}

/// Percent-encodes a file name for use as one URL path segment (RFC 3986 unreserved kept).
fn percent_encode_segment(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for b in s.bytes() {
        if b.is_ascii_alphanumeric() || matches!(b, b'-' | b'.' | b'_' | b'~') {
            out.push(b as char);
        } else {
            out.push_str(&format!("%{b:02X}"));
        }
    }
    out
}

/// Escapes a string as a JSON string literal (RFC 8259 §7).
fn json_string(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 2);
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            c if (c as u32) < 0x20 => out.push_str(&format!("\\u{:04x}", c as u32)),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// `{"feeds":[{"name":"<file stem>","url":"feeds/<file name>"}, ...]}`, the same shape as the
/// static `www/feeds/index.json` the build writes.
fn feed_index_json(feeds: &[(String, PathBuf)]) -> String {
    let items: Vec<String> = feeds
        .iter()
        .map(|(file, path)| {
            let stem = path.file_stem().and_then(|s| s.to_str()).unwrap_or(file);
            format!(
                "{{\"name\":{},\"url\":{}}}",
                json_string(stem),
                json_string(&format!("feeds/{}", percent_encode_segment(file)))
            )
        })
        .collect();
    format!("{{\"feeds\":[{}]}}\n", items.join(","))
}

/// Content type by file extension (case-insensitive). Types as registered with IANA
/// (application/wasm per the WebAssembly Web API spec; text/javascript per RFC 9239).
fn mime_for(name: &str) -> &'static str {
    let ext = match name.rsplit_once('.') {
        Some((_, ext)) => ext.to_ascii_lowercase(),
        None => String::new(),
    };
    match ext.as_str() {
        "html" | "htm" => "text/html; charset=utf-8",
        "js" | "mjs" => "text/javascript; charset=utf-8",
        "css" => "text/css; charset=utf-8",
        "json" | "map" => "application/json",
        "wasm" => "application/wasm",
        "zip" => "application/zip",
        "svg" => "image/svg+xml",
        "png" => "image/png",
        "ico" => "image/x-icon",
        "txt" | "md" => "text/plain; charset=utf-8",
        _ => "application/octet-stream",
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::net::TcpStream;

    fn site() -> Site {
        Site::new(Path::new("/srv/www"), &[])
    }

    // MIME types: IANA media type registry; application/wasm from the WebAssembly Web API spec,
    // text/javascript from RFC 9239.
    #[test]
    fn mime_types_follow_the_registry() {
        assert_eq!(mime_for("timeweave_bg.wasm"), "application/wasm");
        assert_eq!(mime_for("timeweave.js"), "text/javascript; charset=utf-8");
        assert_eq!(mime_for("worker.MJS"), "text/javascript; charset=utf-8");
        assert_eq!(mime_for("index.html"), "text/html; charset=utf-8");
        assert_eq!(mime_for("style.css"), "text/css; charset=utf-8");
        assert_eq!(mime_for("index.json"), "application/json");
        assert_eq!(mime_for("oskerveld-city.zip"), "application/zip");
        assert_eq!(mime_for("icon.svg"), "image/svg+xml");
        assert_eq!(mime_for("shot.PNG"), "image/png");
        assert_eq!(mime_for("README"), "application/octet-stream");
        assert_eq!(mime_for("archive.tar.gz"), "application/octet-stream");
    }

    // Path traversal: OWASP "Path Traversal" attack patterns (dot-dot, encoded dot-dot, encoded
    // separators, backslash variants).
    #[test]
    fn traversal_is_rejected() {
        let s = site();
        for bad in [
            "/../etc/passwd",
            "/a/../../etc/passwd",
            "/%2e%2e/etc/passwd",
            "/%2E%2E/%2E%2E/etc/passwd",
            "/.%2e/x",
            "/..%2fetc%2fpasswd",
            "/pkg/..%5c..%5cetc",
            "/a%00.js",
            "/%zz",
            "/%2",
            "relative/path",
            "/./index.html",
            "/C:%5cwindows",
        ] {
            assert!(
                matches!(resolve(bad, &s), Err(Refusal::BadRequest(_))),
                "{bad} should be refused, got {:?}",
                resolve(bad, &s)
            );
        }
        assert_eq!(resolve("/.git/config", &s), Err(Refusal::NotFound));
    }

    #[test]
    fn ordinary_paths_resolve() {
        let s = site();
        assert_eq!(resolve("/", &s), Ok(Target::Path(vec![])));
        assert_eq!(resolve("/pkg/timeweave_bg.wasm?v=1", &s), Ok(Target::Path(vec!["pkg".into(), "timeweave_bg.wasm".into()])));
        assert_eq!(resolve("/feeds/my%20feed.zip", &s), Ok(Target::Path(vec!["feeds".into(), "my feed.zip".into()])));
        assert_eq!(resolve("//app.js#x", &s), Ok(Target::Path(vec!["app.js".into()])));
        // "..." is an ordinary (if odd) file name, not a parent reference.
        assert_eq!(resolve("/a.../b", &s), Ok(Target::Path(vec!["a...".into(), "b".into()])));
    }

    #[test]
    fn extra_feeds_replace_the_static_index() {
        let s = Site::new(Path::new("/srv/www"), &[PathBuf::from("/data/north \"line\".zip"), PathBuf::from("rail.zip")]);
        assert_eq!(resolve("/feeds/index.json", &s), Ok(Target::FeedIndex));
        assert_eq!(resolve("/feeds/rail.zip", &s), Ok(Target::Feed(1)));
        assert_eq!(resolve("/feeds/north%20%22line%22.zip", &s), Ok(Target::Feed(0)));
        assert_eq!(resolve("/feeds/other.zip", &s), Ok(Target::Path(vec!["feeds".into(), "other.zip".into()])));
        // JSON string escaping per RFC 8259 §7.
        assert_eq!(
            s.feed_index.as_deref(),
            Some(
                "{\"feeds\":[{\"name\":\"north \\\"line\\\"\",\"url\":\"feeds/north%20%22line%22.zip\"},\
                 {\"name\":\"rail\",\"url\":\"feeds/rail.zip\"}]}\n"
            )
        );
        // Without extra feeds the static file under the root answers.
        assert_eq!(resolve("/feeds/index.json", &site()), Ok(Target::Path(vec!["feeds".into(), "index.json".into()])));
    }

    fn get(port: u16, request: &str) -> String {
        let mut s = TcpStream::connect(("127.0.0.1", port)).unwrap();
        s.write_all(request.as_bytes()).unwrap();
        let mut out = String::new();
        s.read_to_string(&mut out).unwrap();
        out
    }

    // HTTP/1.1 message syntax: RFC 9112 (status line, Content-Length, HEAD has no body).
    #[test]
    fn serves_files_over_a_real_socket() {
        let root = std::env::temp_dir().join(format!("timeweave-serve-test-{}", std::process::id()));
        std::fs::create_dir_all(root.join("pkg")).unwrap();
        std::fs::write(root.join("index.html"), "<!doctype html><title>t</title>").unwrap();
        std::fs::write(root.join("pkg").join("m.wasm"), [0u8, 97, 115, 109]).unwrap();
        std::fs::write(root.join("secret.txt"), "outside feeds").unwrap();
        let feed = root.join("extra.zip");
        std::fs::write(&feed, b"PK\x05\x06").unwrap();

        let listener = TcpListener::bind(("127.0.0.1", 0)).unwrap();
        let port = listener.local_addr().unwrap().port();
        let (r, f) = (root.clone(), vec![feed]);
        thread::spawn(move || serve_on(listener, &r, &f));

        let index = get(port, "GET / HTTP/1.1\r\nHost: x\r\n\r\n");
        assert!(index.starts_with("HTTP/1.1 200 OK\r\n"), "{index}");
        assert!(index.contains("Content-Type: text/html; charset=utf-8\r\n"));
        assert!(index.contains("Cache-Control: no-cache\r\n"));
        assert!(index.ends_with("<!doctype html><title>t</title>"));

        let wasm = get(port, "HEAD /pkg/m.wasm HTTP/1.1\r\nHost: x\r\n\r\n");
        assert!(wasm.contains("Content-Type: application/wasm\r\n"), "{wasm}");
        assert!(wasm.contains("Content-Length: 4\r\n"));
        assert!(wasm.ends_with("\r\n\r\n"), "HEAD must not send a body");

        let feeds = get(port, "GET /feeds/index.json HTTP/1.1\r\n\r\n");
        assert!(feeds.ends_with("{\"feeds\":[{\"name\":\"extra\",\"url\":\"feeds/extra.zip\"}]}\n"), "{feeds}");
        let zip = get(port, "GET /feeds/extra.zip HTTP/1.1\r\n\r\n");
        assert!(zip.contains("Content-Type: application/zip\r\n") && zip.ends_with("PK\x05\x06"));

        assert!(get(port, "GET /nope.js HTTP/1.1\r\n\r\n").starts_with("HTTP/1.1 404 "));
        assert!(get(port, "GET /pkg/%2e%2e/secret.txt HTTP/1.1\r\n\r\n").starts_with("HTTP/1.1 400 "));
        assert!(get(port, "GET /../secret.txt HTTP/1.1\r\n\r\n").starts_with("HTTP/1.1 400 "));
        let post = get(port, "POST / HTTP/1.1\r\nContent-Length: 0\r\n\r\n");
        assert!(post.starts_with("HTTP/1.1 405 ") && post.contains("Allow: GET, HEAD\r\n"), "{post}");
        assert!(get(port, "garbage\r\n\r\n").starts_with("HTTP/1.1 400 "));
        let huge = format!("GET / HTTP/1.1\r\nX: {}\r\n\r\n", "a".repeat(MAX_HEAD_BYTES));
        assert!(get(port, &huge).starts_with("HTTP/1.1 431 "));

        std::fs::remove_dir_all(&root).ok();
    }
}
