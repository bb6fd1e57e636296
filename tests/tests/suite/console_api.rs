//! The bench console's requests without a browser: a part on a rig belongs to the lot it was
//! started in, so a new lot is refused while one is recording (before, the part's verdict
//! would have joined whichever lot was current when it ended), and Stop frees the rig.

use std::io::{Read, Write};
use std::net::TcpStream;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{mpsc, Arc};
use std::time::{Duration, Instant};

use remanent::console::{rig::Bench, serve, ConsoleOptions};
use remanent::virtual_rig::{VirtualRig, VirtualRigOptions};

/// One request; the status and the body.
fn ask(addr: &str, method: &str, path: &str, body: &str) -> (u16, String) {
    let mut s = TcpStream::connect(addr).unwrap();
    s.set_read_timeout(Some(Duration::from_secs(20))).unwrap();
    write!(
        s,
        "{method} {path} HTTP/1.1\r\nHost: {addr}\r\nOrigin: http://{addr}\r\n\
         Content-Type: application/json\r\nContent-Length: {}\r\nConnection: close\r\n\r\n{body}",
        body.len()
    )
    .unwrap();
    let mut out = String::new();
    s.read_to_string(&mut out).unwrap();
    let status = out[9..12].parse().unwrap();
    let body = out
        .split_once("\r\n\r\n")
        .map(|x| x.1)
        .unwrap_or("")
        .to_string();
    (status, body)
}

#[test]
fn a_new_lot_waits_for_the_part_on_the_rig_and_stop_frees_it() {
    let part = remanent::magnets::resolve("RM-N42SH-D10x5").unwrap();
    let mut opts = VirtualRigOptions::new(part.model.unwrap());
    opts.speed = 20.0;
    let rig = VirtualRig::start(opts).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let shutdown = Arc::new(AtomicBool::new(false));
    let (tx, rx) = mpsc::channel();
    let console = ConsoleOptions {
        ports: vec![rig.path().to_string()],
        listen: "127.0.0.1:0".parse().unwrap(),
        token: None,
        bench: Bench {
            out: dir.path().join("runs"),
            store: remanent::history::Location::Off,
            policy: Default::default(),
            judging: Default::default(),
            specs: remanent::specs::SpecTable::builtin(),
            look: Default::default(),
        },
        shutdown: shutdown.clone(),
    };
    let server =
        std::thread::spawn(move || serve(console, |url| tx.send(url.to_string()).unwrap()));
    let url = rx.recv_timeout(Duration::from_secs(10)).unwrap();
    let addr = url
        .trim_start_matches("http://")
        .trim_end_matches('/')
        .to_string();
    let lot = r#"{"lot":"L-1","supplier":"S","magnet":"RM-N42SH-D10x5","aql_pct":1,"rql_pct":60}"#;
    assert_eq!(ask(&addr, "POST", "/api/lot", lot).0, 200);
    assert_eq!(
        ask(&addr, "POST", "/api/rig/0/start", r#"{"part":"P-1"}"#).0,
        200
    );
    let (status, why) = ask(&addr, "POST", "/api/lot", &lot.replace("L-1", "L-2"));
    assert_eq!(status, 400, "{why}");
    assert!(why.contains("still on the rig"), "{why}");
    assert_eq!(ask(&addr, "POST", "/api/rig/0/stop", "{}").0, 200);
    let end = Instant::now() + Duration::from_secs(60);
    loop {
        let (_, state) = ask(&addr, "GET", "/api/state", "");
        if state.contains(r#""phase":"done""#) {
            assert!(state.contains("no verdict"), "{state}");
            break;
        }
        assert!(
            Instant::now() < end,
            "the stopped part never ended: {state}"
        );
        std::thread::sleep(Duration::from_millis(200));
    }
    assert_eq!(
        ask(&addr, "POST", "/api/lot", &lot.replace("L-1", "L-2")).0,
        200
    );
    shutdown.store(true, Ordering::Relaxed);
    server.join().unwrap().unwrap();
    rig.stop().unwrap();
}
