//! The console's requests: the page and its assets (inside the binary), the live state as
//! server-sent events, the live charts as SVG, certificates, and the three changes — start a
//! lot, start a part, stop — each checked by [`super::access`] first.

use std::io::{Read, Write};
use std::time::{Duration, Instant};

use serde_json::json;
use tiny_http::{Header, Request, Response};

use super::access::Asked;
use super::Console;

const PAGE: &str = include_str!("assets/console.html");
const SCRIPT: &str = include_str!("assets/console.js");
const STYLE: &str = include_str!("assets/console.css");

/// How often a viewer's stream looks for news.
const TICK: Duration = Duration::from_millis(100);

fn header(k: &str, v: &str) -> Header {
    Header::from_bytes(k.as_bytes(), v.as_bytes()).expect("a valid header")
}

fn respond(req: Request, status: u16, kind: &str, body: Vec<u8>) {
    let r = Response::from_data(body)
        .with_status_code(status)
        .with_header(header("Content-Type", kind))
        .with_header(header("Cache-Control", "no-store"))
        .with_header(header("X-Frame-Options", "DENY"))
        .with_header(header(
            "Content-Security-Policy",
            "default-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data:",
        ));
    let _ = req.respond(r);
}

fn text(req: Request, status: u16, body: &str) {
    respond(
        req,
        status,
        "text/plain; charset=utf-8",
        body.as_bytes().to_vec(),
    );
}

fn json_reply(req: Request, v: &serde_json::Value) {
    respond(req, 200, "application/json", v.to_string().into_bytes());
}

fn header_of<'a>(req: &'a Request, name: &str) -> Option<&'a str> {
    req.headers()
        .iter()
        .find(|h| h.field.as_str().as_str().eq_ignore_ascii_case(name))
        .map(|h| h.value.as_str())
}

fn query_param<'a>(url: &'a str, name: &str) -> Option<&'a str> {
    url.split_once('?')?
        .1
        .split('&')
        .filter_map(|kv| kv.split_once('='))
        .find(|(k, _)| *k == name)
        .map(|(_, v)| v)
}

/// Serve one request.
pub fn handle(c: &Console, mut req: Request) {
    let url = req.url().to_string();
    let path = url.split('?').next().unwrap_or("/").to_string();
    let method = req.method().as_str().to_string();
    // anything but a read is a change (however its path is spelled: `//api/…` once slipped
    // past a check by path), and no read changes anything
    let changes = !matches!(method.as_str(), "GET" | "HEAD");
    let asked = Asked {
        method: &method,
        host: header_of(&req, "Host"),
        origin: header_of(&req, "Origin"),
        token_header: header_of(&req, "X-Console-Token"),
        token_query: query_param(&url, "token"),
        changes,
    };
    if let Err(denied) = c.access.check(&asked) {
        return text(req, 403, &denied.to_string());
    }
    let parts: Vec<&str> = path.trim_matches('/').split('/').collect();
    match (method.as_str(), parts.as_slice()) {
        ("GET", [""]) => respond(req, 200, "text/html; charset=utf-8", PAGE.into()),
        ("GET", ["console.js"]) => respond(req, 200, "text/javascript", SCRIPT.into()),
        ("GET", ["console.css"]) => respond(req, 200, "text/css", STYLE.into()),
        ("GET", ["api", "state"]) => json_reply(req, &c.state()),
        ("GET", ["events"]) => events(c, req),
        ("GET", ["rig", i, chart]) => chart_svg(c, req, i, chart),
        ("GET", ["lot", "part", k, "certificate.pdf"]) => certificate(c, req, k),
        ("POST", ["api", "lot"]) => {
            let body = read_body(&mut req);
            match c.start_lot(&body) {
                Ok(v) => json_reply(req, &v),
                Err(e) => text(req, 400, &e),
            }
        }
        ("POST", ["api", "rig", i, action]) => {
            let body = read_body(&mut req);
            match c.rig_action(i, action, &body) {
                Ok(()) => json_reply(req, &json!({"ok": true})),
                Err(e) => text(req, 409, &e),
            }
        }
        _ => text(req, 404, &format!("nothing at {path}")),
    }
}

fn read_body(req: &mut Request) -> String {
    let mut body = String::new();
    let _ = req.as_reader().take(64 * 1024).read_to_string(&mut body);
    body
}

/// The live state, sent whenever it changes, as server-sent events; a comment every 15 s keeps
/// the stream open and finds a viewer gone.
fn events(c: &Console, req: Request) {
    let Some(_slot) = c.viewer_slot() else {
        return text(req, 503, "too many viewers: close another console page");
    };
    let mut w = req.into_writer();
    let head = "HTTP/1.1 200 OK\r\nContent-Type: text/event-stream\r\nCache-Control: no-store\r\n\
                Connection: keep-alive\r\n\r\n";
    if w.write_all(head.as_bytes())
        .and_then(|_| w.flush())
        .is_err()
    {
        return;
    }
    let (mut seen, mut quiet) = (None, Instant::now());
    loop {
        let version = c.version();
        let news = seen != Some(version);
        let r = if news {
            seen = Some(version);
            quiet = Instant::now();
            write!(w, "data: {}\n\n", c.state())
        } else if quiet.elapsed() > Duration::from_secs(15) {
            quiet = Instant::now();
            write!(w, ": still here\n\n")
        } else {
            Ok(())
        };
        if r.and_then(|_| w.flush()).is_err() {
            return;
        }
        std::thread::sleep(TICK);
    }
}

fn chart_svg(c: &Console, req: Request, i: &str, chart: &str) {
    let Some(hub) = i
        .parse::<usize>()
        .ok()
        .and_then(|i| c.rigs.get(i))
        .map(|r| &r.hub)
    else {
        return text(req, 404, "no such rig");
    };
    // copied under the lock, drawn outside it: the recorder never waits for a viewer
    let (points, last) = {
        let l = hub.lock();
        let pts: Vec<_> = l
            .points
            .iter()
            .map(|p| (p.t_s, p.temp_c, p.flux_mt, p.setpoint_c, p.heating))
            .collect();
        (pts, l.points.last().map(|p| p.received_ms))
    };
    let u = &c.bench.look.units;
    let svg = match chart {
        "bt.svg" => crate::plots::live::flux_vs_temp_svg(&points, u),
        "tt.svg" => crate::plots::live::temp_vs_time_svg(&points, u),
        _ => return text(req, 404, "no such chart"),
    };
    match svg {
        Ok(svg) => {
            let last = last.map_or(String::new(), |v| format!("{v:.0}"));
            let r = Response::from_data(svg.into_bytes())
                .with_header(header("Content-Type", "image/svg+xml"))
                .with_header(header("Cache-Control", "no-store"))
                .with_header(header("X-Last-Received-Ms", &last))
                .with_header(header("X-Drawn-Samples", &points.len().to_string()));
            let _ = req.respond(r);
        }
        Err(e) => text(req, 500, &format!("drawing the chart: {e}")),
    }
}

fn certificate(c: &Console, req: Request, k: &str) {
    let run = k.parse::<usize>().ok().and_then(|k| {
        let lot = c.lot.lock().unwrap_or_else(|p| p.into_inner());
        lot.as_ref()?.parts.get(k).map(|p| p.run.clone())
    });
    let file = run.map(|r| std::path::Path::new(&r).join("certificate.pdf"));
    match file.and_then(|f| std::fs::read(f).ok()) {
        Some(pdf) => respond(req, 200, "application/pdf", pdf),
        None => text(req, 404, "no certificate for that part"),
    }
}
