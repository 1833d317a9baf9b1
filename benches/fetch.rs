//! Speed benchmark of `postassay fetch`: 1,000 queries against a loopback
//! HTTP server that this program starts (127.0.0.1, port from the OS), with
//! 4 requests in flight (`--parallel 4`), the built binary run as a user
//! would. Two passes: a clean one, and one where the first attempt of every
//! 50th query gets a 503 (retried after the default 0.5 s backoff). Prints
//! wall time, the retries and the latency line of each pass.
//!
//! Not part of the data flow: a stand-alone program (`harness = false`).
//! Run: `cargo bench --bench fetch`. `POSTASSAY_BENCH_QUERIES=N` changes the
//! number of queries (default 1000). DEVELOPERS.md ("Benchmarks") explains
//! the output.

use std::io::{BufRead, BufReader, Read, Write};
use std::net::{TcpListener, TcpStream};
use std::process::Command;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex};
use std::time::Instant;

/// Queries when `POSTASSAY_BENCH_QUERIES` is not set.
const DEFAULT_QUERIES: usize = 1000;

/// In the faulty pass, the first attempt of every `FAULT_EVERY`-th query
/// is answered 503.
const FAULT_EVERY: usize = 50;

const TEMPLATE: &str = r#"url = "http://ADDRESS/search?q={text:url}&id={id:url}&n={depth}"

[response]
hits = "/ranking/*"
id = "/post"
score = "/weight"
"#;

fn main() {
    let queries: usize = std::env::var("POSTASSAY_BENCH_QUERIES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(DEFAULT_QUERIES);
    let tmp = tempfile::tempdir().expect("temporary directory");
    let listener = TcpListener::bind("127.0.0.1:0").expect("a loopback port");
    let addr = listener.local_addr().expect("address");
    let faults = Arc::new(AtomicBool::new(false));
    let failed_once = Arc::new(Mutex::new(std::collections::HashSet::new()));
    {
        let (faults, failed_once) = (faults.clone(), failed_once.clone());
        std::thread::spawn(move || {
            for stream in listener.incoming().flatten() {
                let (faults, failed_once) = (faults.clone(), failed_once.clone());
                std::thread::spawn(move || serve(stream, &faults, &failed_once));
            }
        });
    }
    let mut text = String::from("query_id,text\n");
    for n in 0..queries {
        text.push_str(&format!("b{n:04},post words number {n} #tag café\n"));
    }
    let query_file = tmp.path().join("queries.csv");
    std::fs::write(&query_file, text).expect("queries written");
    let template = tmp.path().join("bench.toml");
    std::fs::write(&template, TEMPLATE.replace("ADDRESS", &addr.to_string())).expect("template");
    println!("fetch of {queries} queries from a loopback server, --parallel 4, --depth 100");
    for (pass, faulty) in [("clean", false), ("faulty", true)] {
        faults.store(faulty, Ordering::SeqCst);
        let out = tmp.path().join(pass);
        let start = Instant::now();
        let res = Command::new(env!("CARGO_BIN_EXE_postassay"))
            .args(["fetch", "--queries"])
            .arg(&query_file)
            .arg("--endpoint")
            .arg(format!("bench={}", template.display()))
            .arg("--out")
            .arg(&out)
            .args(["--parallel", "4", "--depth", "100"])
            .output()
            .expect("the built binary runs");
        let wall = start.elapsed().as_secs_f64();
        let stderr = String::from_utf8_lossy(&res.stderr);
        assert!(res.status.success(), "{stderr}");
        let summary = stderr.lines().find(|l| l.contains(" hits")).unwrap_or("");
        println!("{pass:>6}: wall {wall:.2} s (process, start to exit)");
        println!("        {summary}");
    }
}

/// One request per connection: the ranking of the query id in the URL (100
/// posts made from the id), or a 503 in the faulty pass.
fn serve(
    stream: TcpStream,
    faults: &AtomicBool,
    failed_once: &Mutex<std::collections::HashSet<usize>>,
) {
    let Ok(clone) = stream.try_clone() else { return };
    let mut reader = BufReader::new(clone);
    let mut line = String::new();
    if reader.read_line(&mut line).unwrap_or(0) == 0 {
        return;
    }
    let mut length = 0usize;
    loop {
        let mut h = String::new();
        if reader.read_line(&mut h).unwrap_or(0) == 0 || h.trim().is_empty() {
            break;
        }
        if let Some(v) = h.to_ascii_lowercase().strip_prefix("content-length:") {
            length = v.trim().parse().unwrap_or(0);
        }
    }
    let mut body = vec![0u8; length];
    let _ = reader.read_exact(&mut body);
    let id: usize = line
        .split("id=b")
        .nth(1)
        .and_then(|rest| rest.get(..4))
        .and_then(|d| d.parse().ok())
        .unwrap_or(0);
    let fail = faults.load(Ordering::SeqCst)
        && id.is_multiple_of(FAULT_EVERY)
        && failed_once.lock().map(|mut s| s.insert(id)).unwrap_or(false);
    let (status, body) = if fail {
        ("503 Service Unavailable", "{\"reason\": \"busy\"}".to_string())
    } else {
        let hits: Vec<String> = (0..100)
            .map(|k| {
                format!("{{\"post\": \"p{}\", \"weight\": {}}}", (id * 31 + k * 7) % 5000, 100 - k)
            })
            .collect();
        ("200 OK", format!("{{\"ranking\": [{}]}}", hits.join(", ")))
    };
    let mut out = stream;
    let _ = write!(
        out,
        "HTTP/1.1 {status}\r\nContent-Type: application/json\r\nContent-Length: {}\r\nConnection: close\r\n\r\n{body}",
        body.len()
    );
}
