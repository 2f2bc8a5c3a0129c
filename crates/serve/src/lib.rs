//! The static HTTP server for the page in `www/` (and any folder given with `--root`, such as a
//! kiosk folder), so the page, its worker and the WASM module can be opened from
//! `http://127.0.0.1:<port>/` (browsers refuse module workers and `application/wasm` streaming
//! from `file://`).
//!
//! It owns the mapping from a request target to a file under one root directory, plus the
//! optional extra feed zips given on the command line, served at `/feeds/<file name>` together
//! with a generated `/feeds/index.json` listing them. HTTP itself (parsing, keep-alive, HEAD,
//! chunking) is `tiny_http`'s; percent-decoding is `percent-encoding`'s; content types are
//! `mime_guess`'s; the feed list is written by `serde_json`.
//!
//! It binds to 127.0.0.1 only, answers GET and HEAD only, never lists directories, never serves
//! dot-files, and rejects any target whose percent-decoded path has a `..` segment, a backslash
//! or a NUL byte. Every response carries `Cache-Control: no-cache` so a rebuilt `www/pkg/` is
//! picked up on reload.

use std::fs::File;
use std::io;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::thread;

use percent_encoding::{percent_decode_str, utf8_percent_encode, AsciiSet, NON_ALPHANUMERIC};
use tiny_http::{Header, Method, Request, Response, Server, StatusCode};

/// What a file name keeps unescaped in a URL path segment: RFC 3986 §2.3 unreserved characters.
const SEGMENT: &AsciiSet = &NON_ALPHANUMERIC.remove(b'-').remove(b'.').remove(b'_').remove(b'~');

/// Requests served at once (each a thread; a large feed zip does not hold up the page).
const WORKERS: usize = 4;

/// Serves `root` at `http://127.0.0.1:<port>/` until the process ends.
///
/// `feeds` are extra GTFS zips served at `/feeds/<file name>`; when any are given,
/// `/feeds/index.json` is generated from them (`name` = file stem) instead of being read from
/// `root`. Port 0 asks the system for a free port; the line printed once listening names the
/// real one: `timeweave: serving <root> at http://127.0.0.1:<port>/`.
pub fn serve(root: &Path, port: u16, feeds: &[PathBuf]) -> io::Result<()> {
    let server = Server::http(("127.0.0.1", port)).map_err(io::Error::other)?;
    let bound = server.server_addr().to_ip().map_or(port, |a| a.port());
    println!("timeweave: serving {} at http://127.0.0.1:{}/", root.display(), bound);
    serve_on(server, root, feeds);
    Ok(())
}

/// The request loop on an already bound server (split from [`serve`] so tests can bind port 0).
fn serve_on(server: Server, root: &Path, feeds: &[PathBuf]) {
    let (server, site) = (Arc::new(server), Arc::new(Site::new(root, feeds)));
    let workers: Vec<_> = (0..WORKERS)
        .map(|_| {
            let (server, site) = (Arc::clone(&server), Arc::clone(&site));
            thread::spawn(move || {
                for request in server.incoming_requests() {
                    // A client that goes away mid-response is not our error to report.
                    let _ = handle(request, &site);
                }
            })
        })
        .collect();
    for w in workers {
        let _ = w.join();
    }
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

fn header(name: &str, value: &str) -> Header {
    Header::from_bytes(name.as_bytes(), value.as_bytes()).expect("header names and values are ASCII")
}

fn handle(request: Request, site: &Site) -> io::Result<()> {
    let common = [("Cache-Control", "no-cache"), ("X-Content-Type-Options", "nosniff"), ("Referrer-Policy", "no-referrer")];
    let text = |status: u16, why: &str| {
        Response::from_string(format!("{status}: {why}\n"))
            .with_status_code(StatusCode(status))
            .with_header(header("Content-Type", "text/plain; charset=utf-8"))
    };
    if !matches!(request.method(), Method::Get | Method::Head) {
        let mut r = text(405, "only GET and HEAD are served").with_header(header("Allow", "GET, HEAD"));
        common.iter().for_each(|(n, v)| r.add_header(header(n, v)));
        return request.respond(r);
    }
    let file = match resolve(request.url(), site) {
        Err(Refusal::BadRequest(why)) => Err(text(400, why)),
        Err(Refusal::NotFound) => Err(text(404, "no such file")),
        Ok(Target::FeedIndex) => {
            let mut r =
                Response::from_string(site.feed_index.clone().unwrap_or_default()).with_header(header("Content-Type", "application/json"));
            common.iter().for_each(|(n, v)| r.add_header(header(n, v)));
            return request.respond(r);
        }
        Ok(Target::Feed(i)) => open_file(&site.feeds[i].1).ok_or_else(|| text(404, "no such file")),
        Ok(Target::Path(segments)) => {
            let mut path = site.root.clone();
            segments.iter().for_each(|s| path.push(s));
            if path.is_dir() {
                path.push("index.html");
            }
            open_file(&path).ok_or_else(|| text(404, "no such file"))
        }
    };
    match file {
        Ok((f, len, ctype)) => {
            let mut r = Response::new(StatusCode(200), vec![header("Content-Type", &ctype)], f, Some(len as usize), None);
            common.iter().for_each(|(n, v)| r.add_header(header(n, v)));
            request.respond(r)
        }
        Err(mut r) => {
            common.iter().for_each(|(n, v)| r.add_header(header(n, v)));
            request.respond(r)
        }
    }
}

/// Opens a regular file with its length and content type.
fn open_file(path: &Path) -> Option<(File, u64, String)> {
    let file = File::open(path).ok()?;
    let meta = file.metadata().ok().filter(|m| m.is_file())?;
    Some((file, meta.len(), content_type(path)))
}

/// Content type by file extension, from `mime_guess`; text types carry `charset=utf-8`.
fn content_type(path: &Path) -> String {
    let mime = mime_guess::from_path(path).first_or_octet_stream();
    match mime.type_() {
        mime_guess::mime::TEXT => format!("{}; charset=utf-8", mime.essence_str()),
        _ if mime.essence_str() == "application/javascript" => "text/javascript; charset=utf-8".into(),
        _ => mime.essence_str().to_string(),
    }
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
        if !well_escaped(raw) {
            return Err(Refusal::BadRequest("bad percent-encoding in path"));
        }
        let seg = percent_decode_str(raw).decode_utf8().map_err(|_| Refusal::BadRequest("path is not UTF-8"))?.into_owned();
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

/// True when every `%` starts a two-digit hex escape (RFC 3986 §2.1); `percent-encoding`
/// passes malformed escapes through, and we refuse them.
fn well_escaped(raw: &str) -> bool {
    let b = raw.as_bytes();
    b.iter().enumerate().filter(|(_, &c)| c == b'%').all(|(i, _)| b.get(i + 1..i + 3).is_some_and(|h| h.iter().all(u8::is_ascii_hexdigit)))
}

/// `{"feeds":[{"name":"<file stem>","url":"feeds/<file name>"}, ...]}`, the same shape as the
/// static `www/feeds/index.json` the build writes.
fn feed_index_json(feeds: &[(String, PathBuf)]) -> String {
    let items: Vec<serde_json::Value> = feeds
        .iter()
        .map(|(file, path)| {
            let stem = path.file_stem().and_then(|s| s.to_str()).unwrap_or(file);
            serde_json::json!({ "name": stem, "url": format!("feeds/{}", utf8_percent_encode(file, SEGMENT)) })
        })
        .collect();
    format!("{}\n", serde_json::json!({ "feeds": items }))
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
        let ct = |name: &str| content_type(Path::new(name));
        assert_eq!(ct("timeweave_bg.wasm"), "application/wasm");
        assert_eq!(ct("timeweave.js"), "text/javascript; charset=utf-8");
        assert_eq!(ct("worker.MJS"), "text/javascript; charset=utf-8");
        assert_eq!(ct("index.html"), "text/html; charset=utf-8");
        assert_eq!(ct("style.css"), "text/css; charset=utf-8");
        assert_eq!(ct("index.json"), "application/json");
        assert_eq!(ct("oskerveld-city.zip"), "application/zip");
        assert_eq!(ct("icon.svg"), "image/svg+xml");
        assert_eq!(ct("shot.PNG"), "image/png");
        assert_eq!(ct("README"), "application/octet-stream");
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
            assert!(matches!(resolve(bad, &s), Err(Refusal::BadRequest(_))), "{bad} should be refused, got {:?}", resolve(bad, &s));
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
        use std::io::{Read, Write};
        // One request per connection: the server keeps HTTP/1.1 connections open otherwise.
        let request = request.replacen("\r\n", "\r\nConnection: close\r\n", 1);
        let mut s = TcpStream::connect(("127.0.0.1", port)).unwrap();
        s.set_read_timeout(Some(std::time::Duration::from_secs(10))).unwrap();
        s.write_all(request.as_bytes()).unwrap();
        let mut out = String::new();
        s.read_to_string(&mut out).unwrap();
        out
    }

    // HTTP/1.1 message syntax: RFC 9112 (status line, Content-Length, HEAD has no body).
    #[test]
    fn serves_files_over_a_real_socket() {
        let dir = tempfile::tempdir().unwrap();
        let root = dir.path().to_path_buf();
        std::fs::create_dir_all(root.join("pkg")).unwrap();
        std::fs::write(root.join("index.html"), "<!doctype html><title>t</title>").unwrap();
        std::fs::write(root.join("pkg").join("m.wasm"), [0u8, 97, 115, 109]).unwrap();
        std::fs::write(root.join("secret.txt"), "outside feeds").unwrap();
        let feed = root.join("extra.zip");
        std::fs::write(&feed, b"PK\x05\x06").unwrap();

        let server = Server::http("127.0.0.1:0").unwrap();
        let port = server.server_addr().to_ip().unwrap().port();
        let (r, f) = (root.clone(), vec![feed]);
        thread::spawn(move || serve_on(server, &r, &f));

        let index = get(port, "GET / HTTP/1.1\r\nHost: x\r\n\r\n");
        assert!(index.starts_with("HTTP/1.1 200 OK\r\n"), "{index}");
        assert!(index.contains("Content-Type: text/html; charset=utf-8\r\n"), "{index}");
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
    }
}
