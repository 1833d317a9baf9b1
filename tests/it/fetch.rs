//! `postassay fetch` against a small HTTP/1.1 server that each test starts on
//! loopback (port given by the OS), serving the rankings of
//! `tests/fixtures/fetch/rankings.json` (see the README there), plus the
//! six-column run layout read by `score`.
//!
//! Expected escapes: RFC 3986 §2.1 and §2.3 (percent-encoding of every UTF-8
//! byte but the unreserved characters) and RFC 8259 §7 (JSON strings); the
//! UTF-8 bytes of é (C3 A9) and 😀 (F0 9F 98 80) are from RFC 3629's
//! encoding of U+00E9 and U+1F600.

use std::collections::{BTreeMap, BTreeSet};
use std::io::{BufRead, BufReader, Read, Write};
use std::net::{SocketAddr, TcpListener, TcpStream};
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use crate::util::{fixture, texts};

/// The secret the templates read from the environment; it must never show.
const SECRET: &str = "s3cret-Value-77";

/// One request as the server received it.
#[derive(Debug, Clone)]
struct Request {
    method: String,
    target: String,
    headers: Vec<(String, String)>,
    body: String,
    at: Instant,
    /// The query id, decoded from the URL or the JSON body.
    query: String,
}

impl Request {
    fn header(&self, name: &str) -> Option<&str> {
        self.headers.iter().find(|(n, _)| n.eq_ignore_ascii_case(name)).map(|(_, v)| v.as_str())
    }
}

/// What the server answers.
struct Reply {
    status: u16,
    headers: Vec<(&'static str, String)>,
    body: String,
    delay: Duration,
}

/// Decides a reply from the request and how many earlier requests had the
/// same query id.
type Handler = dyn Fn(&Request, usize) -> Reply + Send + Sync;

/// A loopback HTTP/1.1 server: one thread per connection, one request per
/// connection (`Connection: close`), every request logged before it is
/// answered.
struct Server {
    addr: SocketAddr,
    log: Arc<Mutex<Vec<Request>>>,
    stop: Arc<AtomicBool>,
}

impl Server {
    fn start(handler: Arc<Handler>) -> Server {
        let listener = TcpListener::bind("127.0.0.1:0").expect("loopback port");
        let addr = listener.local_addr().expect("address");
        let log = Arc::new(Mutex::new(Vec::new()));
        let stop = Arc::new(AtomicBool::new(false));
        let (log2, stop2) = (log.clone(), stop.clone());
        std::thread::spawn(move || {
            for stream in listener.incoming() {
                if stop2.load(Ordering::SeqCst) {
                    break;
                }
                let Ok(stream) = stream else { continue };
                let (log, handler) = (log2.clone(), handler.clone());
                std::thread::spawn(move || serve(stream, &log, &*handler));
            }
        });
        Server { addr, log, stop }
    }

    fn requests(&self) -> Vec<Request> {
        self.log.lock().expect("log").clone()
    }

    /// A template fixture with this server's address.
    fn template(&self, dir: &Path, name: &str) -> PathBuf {
        let text = std::fs::read_to_string(fixture(&format!("fetch/{name}"))).expect("fixture");
        let path = dir.join(name);
        std::fs::write(&path, text.replace("ADDRESS", &self.addr.to_string())).expect("written");
        path
    }
}

impl Drop for Server {
    fn drop(&mut self) {
        self.stop.store(true, Ordering::SeqCst);
        let _ = TcpStream::connect(self.addr);
    }
}

fn serve(stream: TcpStream, log: &Mutex<Vec<Request>>, handler: &Handler) {
    let mut reader = BufReader::new(match stream.try_clone() {
        Ok(s) => s,
        Err(_) => return,
    });
    let mut line = String::new();
    if reader.read_line(&mut line).unwrap_or(0) == 0 {
        return;
    }
    let mut parts = line.split_whitespace();
    let (method, target) =
        (parts.next().unwrap_or("").to_string(), parts.next().unwrap_or("").to_string());
    let mut headers = Vec::new();
    loop {
        let mut h = String::new();
        if reader.read_line(&mut h).unwrap_or(0) == 0 || h.trim().is_empty() {
            break;
        }
        if let Some((n, v)) = h.split_once(':') {
            headers.push((n.trim().to_string(), v.trim().to_string()));
        }
    }
    let length = headers
        .iter()
        .find(|(n, _)| n.eq_ignore_ascii_case("content-length"))
        .and_then(|(_, v)| v.parse::<usize>().ok())
        .unwrap_or(0);
    let mut body = vec![0u8; length];
    if reader.read_exact(&mut body).is_err() {
        return;
    }
    let body = String::from_utf8(body).expect("UTF-8 body");
    let query = query_id_of(&target, &body);
    let request = Request { method, target, headers, body, at: Instant::now(), query };
    let seen = {
        let mut log = log.lock().expect("log");
        let seen = log.iter().filter(|r| r.query == request.query).count();
        log.push(request.clone());
        seen
    };
    let reply = handler(&request, seen);
    std::thread::sleep(reply.delay);
    let mut out = stream;
    let mut head = format!(
        "HTTP/1.1 {} X\r\nContent-Type: application/json\r\nContent-Length: {}\r\nConnection: close\r\n",
        reply.status,
        reply.body.len()
    );
    for (n, v) in &reply.headers {
        head.push_str(&format!("{n}: {v}\r\n"));
    }
    head.push_str("\r\n");
    let _ = out.write_all(head.as_bytes()).and_then(|()| out.write_all(reply.body.as_bytes()));
}

/// Percent-decoding (RFC 3986 §2.1).
fn percent_decode(s: &str) -> String {
    let bytes = s.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < bytes.len() {
        if bytes[i] == b'%' && i + 2 < bytes.len() {
            let hex = std::str::from_utf8(&bytes[i + 1..i + 3]).expect("ascii");
            out.push(u8::from_str_radix(hex, 16).expect("hex"));
            i += 3;
        } else {
            out.push(bytes[i]);
            i += 1;
        }
    }
    String::from_utf8(out).expect("UTF-8")
}

fn query_param<'a>(target: &'a str, name: &str) -> Option<&'a str> {
    let (_, query) = target.split_once('?')?;
    query.split('&').find_map(|kv| kv.strip_prefix(name)?.strip_prefix('='))
}

fn query_id_of(target: &str, body: &str) -> String {
    if let Some(id) = query_param(target, "id") {
        return percent_decode(id);
    }
    let v: serde_json::Value = serde_json::from_str(body).unwrap_or_default();
    v["query"]["id"].as_str().unwrap_or("").to_string()
}

/// The fixture rankings by query id.
fn rankings() -> BTreeMap<String, Vec<(String, f64)>> {
    let text = std::fs::read_to_string(fixture("fetch/rankings.json")).expect("fixture");
    serde_json::from_str(&text).expect("rankings JSON")
}

/// The answer to a request in the shape its template expects, for the
/// fixture's rankings or, for an id outside them, a ranking made from the id
/// (`gen`-prefixed ids of the resume test).
fn answer(request: &Request) -> String {
    let ranking = rankings().get(&request.query).cloned().unwrap_or_else(|| {
        let n: u64 = request.query.trim_start_matches("gen").parse().unwrap_or(0);
        (0..5).map(|k| (format!("p{}", (n * 7 + k * 3) % 50), 10.0 - k as f64 * 1.25)).collect()
    });
    if request.method == "GET" {
        let n: usize = query_param(&request.target, "n").and_then(|d| d.parse().ok()).unwrap_or(10);
        let hits: Vec<serde_json::Value> = ranking
            .iter()
            .take(n)
            .map(|(p, s)| serde_json::json!({"post": p, "weight": s}))
            .collect();
        serde_json::json!({"took_ms": 1, "ranking": hits}).to_string()
    } else {
        let v: serde_json::Value = serde_json::from_str(&request.body).expect("JSON body");
        let n = v["size"].as_u64().unwrap_or(10) as usize;
        // Numeric post ids come back as JSON integers.
        let hits: Vec<serde_json::Value> = ranking
            .iter()
            .take(n)
            .map(|(p, s)| {
                let key = p.parse::<u64>().map_or(serde_json::json!(p), |n| serde_json::json!(n));
                serde_json::json!({"doc": {"key": key, "relevance": s}})
            })
            .collect();
        serde_json::json!({"data": {"results": hits}}).to_string()
    }
}

fn ok(request: &Request) -> Reply {
    reply(200, &[], &answer(request))
}

/// An immediate reply with this status, headers and body.
fn reply(status: u16, headers: &[(&'static str, &str)], body: &str) -> Reply {
    let headers = headers.iter().map(|(n, v)| (*n, v.to_string())).collect();
    Reply { status, headers, body: body.to_string(), delay: Duration::ZERO }
}

/// Run `postassay fetch` with the secret in its environment.
fn fetch(cwd: &Path, args: &[&str]) -> Output {
    fetch_command(cwd, args).output().expect("the test binary runs")
}

fn fetch_command(cwd: &Path, args: &[&str]) -> Command {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_postassay"));
    cmd.current_dir(cwd).env("POSTASSAY_TEST_SECRET", SECRET).arg("fetch").args(args);
    cmd
}

/// `--queries Q --endpoint NAME=T --out DIR --depth 3` plus `extra`.
fn fetch_one(dir: &Path, queries: &Path, name: &str, template: &Path, extra: &[&str]) -> Output {
    let endpoint = format!("{name}={}", template.display());
    let out = dir.join("runs");
    let mut args = vec![
        "--queries",
        queries.to_str().expect("utf-8"),
        "--endpoint",
        &endpoint,
        "--out",
        out.to_str().expect("utf-8"),
        "--depth",
        "3",
        "--backoff",
        "0.01",
    ];
    args.extend_from_slice(extra);
    fetch(dir, &args)
}

/// Everything the fetch left in `dir/runs`, the secret must be in none.
fn assert_secret_hidden(dir: &Path, stderr: &str) {
    assert!(!stderr.contains(SECRET), "{stderr}");
    for entry in std::fs::read_dir(dir.join("runs")).into_iter().flatten().flatten() {
        let text = std::fs::read_to_string(entry.path()).unwrap_or_default();
        assert!(!text.contains(SECRET), "{}", entry.path().display());
    }
}

#[test]
fn get_and_post_templates_write_the_served_rankings_then_score_reads_them() {
    let server = Server::start(Arc::new(|r: &Request, _| ok(r)));
    let tmp = tempfile::tempdir().expect("temp dir");
    let (get, post) =
        (server.template(tmp.path(), "get.toml"), server.template(tmp.path(), "post.toml"));
    let endpoints = [format!("get={}", get.display()), format!("post={}", post.display())];
    let out = tmp.path().join("runs");
    let queries = fixture("fetch/queries.csv");
    let res = fetch(
        tmp.path(),
        &[
            "--queries",
            queries.to_str().expect("utf-8"),
            "--endpoint",
            &endpoints[0],
            "--endpoint",
            &endpoints[1],
            "--out",
            out.to_str().expect("utf-8"),
            "--depth",
            "3",
            "--parallel",
            "3",
        ],
    );
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    // Both runs are the fixture's rankings cut at depth 3, in byte order of
    // query id (hand-derived: tests/fixtures/fetch/README.md).
    let expected = std::fs::read_to_string(fixture("fetch/expected_depth3.csv")).expect("fixture");
    for name in ["get", "post"] {
        let written = std::fs::read_to_string(out.join(format!("{name}.csv"))).expect("run file");
        assert_eq!(written, expected, "{name}");
        assert!(!out.join(format!("{name}.csv.partial")).exists(), "partial file left");
    }
    assert!(
        stderr.contains("fetch get: 4 queries (4 fetched, 0 resumed), 6 hits; 0 retries"),
        "{stderr}"
    );
    assert!(stderr.contains("latency ms p50 "), "{stderr}");
    assert!(
        stderr.contains(&format!(
            "next: postassay score --judgments FILE --run get={}",
            out.join("get.csv").display()
        )),
        "{stderr}"
    );

    // What the server received: four requests per template, the secret in
    // the header the template names, and the query text escaped.
    let requests = server.requests();
    let gets: Vec<&Request> = requests.iter().filter(|r| r.method == "GET").collect();
    let posts: Vec<&Request> = requests.iter().filter(|r| r.method == "POST").collect();
    assert_eq!((gets.len(), posts.len()), (4, 4));
    assert!(gets.iter().all(|r| r.header("X-Api-Key") == Some(SECRET)));
    assert!(posts.iter().all(|r| r.header("Authorization") == Some(&*format!("Bearer {SECRET}"))));
    assert!(posts.iter().all(|r| r.header("Content-Type") == Some("application/json")));
    let targets: BTreeSet<&str> = gets.iter().map(|r| r.target.as_str()).collect();
    let expected_targets: BTreeSet<&str> = [
        // q1: café "quoted" & #tag 😀 (space %20, quote %22, & %26, # %23).
        "/search?q=caf%C3%A9%20%22quoted%22%20%26%20%23tag%20%F0%9F%98%80&id=q1&lang=fr&n=3",
        "/search?q=plain%20words&id=q2&lang=en&n=3",
        "/search?q=nothing%20here&id=q10&lang=&n=3",
        // ü C3 BC, ï C3 AF, ö C3 B6, é C3 A9.
        "/search?q=%C3%BCn%C3%AFc%C3%B6d%C3%A9&id=q%C3%A9&lang=de&n=3",
    ]
    .into();
    assert_eq!(targets, expected_targets);
    let q1 = posts.iter().find(|r| r.query == "q1").expect("q1 posted");
    assert!(
        q1.body.contains(r#"{"query": {"text": "café \"quoted\" & #tag 😀", "id": "q1", "lang": "fr"}, "size": 3}"#),
        "{}",
        q1.body
    );
    let q10 = posts.iter().find(|r| r.query == "q10").expect("q10 posted");
    assert!(q10.body.contains(r#""lang": null"#), "{}", q10.body);
    assert_secret_hidden(tmp.path(), &stderr);

    // `score` takes the runs as they are: the same rankings score the same.
    let judgments = fixture("fetch/qrels.csv");
    let report = tmp.path().join("report");
    let runs = [
        format!("get={}", out.join("get.csv").display()),
        format!("post={}", out.join("post.csv").display()),
    ];
    let res = crate::util::postassay(
        tmp.path(),
        &[
            "score",
            "--judgments",
            judgments.to_str().expect("utf-8"),
            "--run",
            &runs[0],
            "--run",
            &runs[1],
            "--metrics",
            "p@3",
            "--out",
            report.to_str().expect("utf-8"),
        ],
    );
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let summary = std::fs::read_to_string(report.join("summary.csv")).expect("summary");
    // P@3 by hand: q1 has p1 (2) in its top 3 → 1/3; q2 has 17 → 1/3; qé
    // has p1 → 1/3 (p@k divides by k; q10 is not judged): mean 1/3.
    let rows: Vec<&str> = summary.lines().skip(1).collect();
    assert_eq!(rows.len(), 2, "{summary}");
    for (row, name) in rows.iter().zip(["get", "post"]) {
        assert!(row.starts_with(&format!("{name},p@3,0.3333333333333333,")), "{summary}");
    }
}

#[test]
fn too_many_requests_is_retried_after_the_wait_it_asks_for() {
    let server = Server::start(Arc::new(|r: &Request, seen| {
        if r.query == "q2" && seen == 0 {
            reply(429, &[("Retry-After", "1")], "{}")
        } else {
            ok(r)
        }
    }));
    let tmp = tempfile::tempdir().expect("temp dir");
    let template = server.template(tmp.path(), "get.toml");
    let res = fetch_one(tmp.path(), &fixture("fetch/queries.csv"), "a", &template, &[]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    let expected = std::fs::read_to_string(fixture("fetch/expected_depth3.csv")).expect("fixture");
    assert_eq!(std::fs::read_to_string(tmp.path().join("runs/a.csv")).expect("run"), expected);
    assert!(stderr.contains("1 retry (429 1)"), "{stderr}");
    assert!(stderr.contains("query \"q2\": HTTP status 429 Too Many Requests"), "{stderr}");
    // Retry-After: 1 (RFC 9110 §10.2.3) outweighs the 0.01 s backoff.
    let q2: Vec<Instant> =
        server.requests().iter().filter(|r| r.query == "q2").map(|r| r.at).collect();
    assert_eq!(q2.len(), 2);
    assert!(q2[1].duration_since(q2[0]) >= Duration::from_millis(950), "{:?}", q2[1] - q2[0]);
}

#[test]
fn server_errors_past_the_tries_end_with_exit_2_naming_the_query() {
    let server = Server::start(Arc::new(|r: &Request, _| {
        if r.query == "q2" {
            reply(500, &[], "{\"reason\": \"overloaded\"}")
        } else {
            ok(r)
        }
    }));
    let tmp = tempfile::tempdir().expect("temp dir");
    let template = server.template(tmp.path(), "get.toml");
    let res =
        fetch_one(tmp.path(), &fixture("fetch/queries.csv"), "a", &template, &["--tries", "3"]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains(r#"query "q2": HTTP status 500 Internal Server Error: {"reason": "overloaded"} (3 tries)"#),
        "{stderr}"
    );
    assert_eq!(server.requests().iter().filter(|r| r.query == "q2").count(), 3);
    assert!(!tmp.path().join("runs/a.csv").exists(), "no run file after a failure");
    assert!(tmp.path().join("runs/a.csv.partial").exists(), "the partial file is kept");
    // The other three queries are in flight or done when q2 fails.
    assert!(stderr.contains("runs/a.csv.partial: "), "{stderr}");
    assert!(stderr.contains(" fetched so far; run the same command again"), "{stderr}");
    assert_secret_hidden(tmp.path(), &stderr);
}

#[test]
fn a_slow_answer_past_the_time_limit_is_retried_then_fails_when_always_slow() {
    let slow = Duration::from_secs(3);
    let server = Server::start(Arc::new(move |r: &Request, seen| {
        let delay = match r.query.as_str() {
            "q2" if seen == 0 => slow,
            "q10" => slow,
            _ => Duration::ZERO,
        };
        Reply { delay, ..ok(r) }
    }));
    let tmp = tempfile::tempdir().expect("temp dir");
    let template = server.template(tmp.path(), "get.toml");
    let queries = crate::util::write(tmp.path(), "q.csv", "query_id,text\nq1,a\nq2,b\n");
    let res = fetch_one(tmp.path(), &queries, "a", &template, &["--timeout", "0.5"]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    assert!(stderr.contains("1 retry (time-out 1)"), "{stderr}");
    assert!(stderr.contains("query \"q2\": timed out after 0.5 s; trying again"), "{stderr}");

    let queries = crate::util::write(tmp.path(), "q10.csv", "query_id,text\nq10,c\n");
    let res =
        fetch_one(tmp.path(), &queries, "b", &template, &["--timeout", "0.5", "--tries", "2"]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains(r#"query "q10": timed out after 0.5 s (2 tries)"#), "{stderr}");
}

#[test]
fn an_answer_without_the_hit_list_names_query_pointer_and_excerpt() {
    let server = Server::start(Arc::new(|r: &Request, _| {
        if r.query == "q10" {
            reply(200, &[], "{\"error\": {\"reason\": \"no such index: posts_v2\"}}")
        } else {
            ok(r)
        }
    }));
    let tmp = tempfile::tempdir().expect("temp dir");
    let template = server.template(tmp.path(), "get.toml");
    let res = fetch_one(tmp.path(), &fixture("fetch/queries.csv"), "a", &template, &[]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains(r#"query "q10": the answer does not match the template: the hit list "/ranking/*" is not in the answer (no "/ranking"); answer: {"error": {"reason": "no such index: posts_v2"}}"#),
        "{stderr}"
    );
}

#[test]
fn every_template_is_checked_before_the_first_request() {
    let server = Server::start(Arc::new(|r: &Request, _| ok(r)));
    let tmp = tempfile::tempdir().expect("temp dir");
    let get = server.template(tmp.path(), "get.toml");
    let bad = crate::util::write(
        tmp.path(),
        "bad.toml",
        "url = \"http://127.0.0.1:1/s?q={text}\"\n[response]\nhits = \"/r/*\"\nid = \"/p\"\nscore = \"/s\"\n",
    );
    let queries = fixture("fetch/queries.csv");
    let (first, second) = (format!("a={}", get.display()), format!("b={}", bad.display()));
    let args = [
        "--queries",
        queries.to_str().expect("utf-8"),
        "--endpoint",
        &first,
        "--endpoint",
        &second,
        "--out",
        "runs",
    ];
    let res = fetch(tmp.path(), &args);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains(&format!(
            "{}:1: url: {{text}}: say how to escape it here, {{text:url}}",
            bad.display()
        )),
        "{stderr}"
    );
    // Without the secret's variable, the template that needs it is refused.
    let res = Command::new(env!("CARGO_BIN_EXE_postassay"))
        .current_dir(tmp.path())
        .env_remove("POSTASSAY_TEST_SECRET")
        .args([
            "fetch",
            "--queries",
            queries.to_str().expect("utf-8"),
            "--endpoint",
            &first,
            "--out",
            "runs",
        ])
        .output()
        .expect("runs");
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains(&format!("{}:6: headers: X-Api-Key: the environment variable \"POSTASSAY_TEST_SECRET\" is not set", get.display())), "{stderr}");
    assert!(server.requests().is_empty());
    assert!(!tmp.path().join("runs").exists());
}

#[test]
fn a_killed_fetch_resumes_with_only_the_missing_queries_and_the_same_bytes() {
    let slow = Arc::new(AtomicBool::new(true));
    let slow2 = slow.clone();
    let server = Server::start(Arc::new(move |r: &Request, _| {
        let delay =
            if slow2.load(Ordering::SeqCst) { Duration::from_millis(40) } else { Duration::ZERO };
        Reply { delay, ..ok(r) }
    }));
    let tmp = tempfile::tempdir().expect("temp dir");
    let template = server.template(tmp.path(), "get.toml");
    let mut queries = String::from("query_id,text\n");
    for n in 0..80 {
        queries.push_str(&format!("gen{n},words {n}\n"));
    }
    let queries = crate::util::write(tmp.path(), "q.csv", &queries);

    // Uninterrupted, for the bytes to compare with.
    let whole = tmp.path().join("whole");
    std::fs::create_dir(&whole).expect("dir");
    let res = fetch_one(&whole, &queries, "a", &template, &["--parallel", "4"]);
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let expected = std::fs::read(whole.join("runs/a.csv")).expect("run");
    let before = server.requests().len();
    assert_eq!(before, 80);

    // Killed once about 15 queries are in.
    let cut = tmp.path().join("cut");
    std::fs::create_dir(&cut).expect("dir");
    let partial = cut.join("runs/a.csv.partial");
    let endpoint = format!("a={}", template.display());
    let out = cut.join("runs");
    let mut child = fetch_command(
        &cut,
        &[
            "--queries",
            queries.to_str().expect("utf-8"),
            "--endpoint",
            &endpoint,
            "--out",
            out.to_str().expect("utf-8"),
            "--depth",
            "3",
            "--parallel",
            "2",
        ],
    )
    .stderr(Stdio::null())
    .spawn()
    .expect("spawned");
    let deadline = Instant::now() + Duration::from_secs(60);
    while std::fs::read_to_string(&partial).map_or(0, |t| t.lines().count()) < 16 {
        assert!(Instant::now() < deadline, "the fetch wrote no partial file");
        std::thread::sleep(Duration::from_millis(5));
    }
    child.kill().expect("SIGKILL");
    let _ = child.wait();
    let text = std::fs::read_to_string(&partial).expect("partial kept");
    assert!(text.ends_with('\n'), "a torn last line: {text:?}");
    let kept: BTreeSet<String> = text
        .lines()
        .skip(1)
        .map(|l| {
            let v: serde_json::Value = serde_json::from_str(l).expect("whole JSON line");
            v["query_id"].as_str().expect("id").to_string()
        })
        .collect();
    assert!(kept.len() >= 15 && kept.len() < 80, "{}", kept.len());

    // Resumed: only the queries the partial file lacks are sent.
    slow.store(false, Ordering::SeqCst);
    let after_kill = server.requests().len();
    let res = fetch_one(&cut, &queries, "a", &template, &["--parallel", "4"]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    let resumed: Vec<String> =
        server.requests()[after_kill..].iter().map(|r| r.query.clone()).collect();
    let missing: BTreeSet<String> =
        (0..80).map(|n| format!("gen{n}")).filter(|q| !kept.contains(q)).collect();
    assert_eq!(resumed.len(), missing.len(), "{resumed:?}");
    assert_eq!(resumed.into_iter().collect::<BTreeSet<_>>(), missing);
    assert!(stderr.contains(&format!("({} already fetched, resuming)", kept.len())), "{stderr}");
    assert_eq!(std::fs::read(out.join("a.csv")).expect("run"), expected);
    assert!(!partial.exists());
}

#[test]
fn six_column_run_scores_as_its_csv_twin() {
    // tests/fixtures/score/run_a.csv rewritten in the six-column layout.
    let tmp = tempfile::tempdir().expect("temp dir");
    let csv = std::fs::read_to_string(fixture("score/run_a.csv")).expect("fixture");
    let six: String = csv
        .lines()
        .skip(1)
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            format!("{}\tQ0 {}  {} {} tagA\n", f[0], f[1], f[2], f[3])
        })
        .collect();
    let six_path = crate::util::write(tmp.path(), "run_a.txt", &six);
    let qrels = fixture("score/qrels.csv");
    let mut outputs = Vec::new();
    for (name, run) in [("csv", fixture("score/run_a.csv")), ("six", six_path)] {
        let out = tmp.path().join(name);
        let spec = format!("a={}", run.display());
        let res = crate::util::postassay(
            tmp.path(),
            &[
                "score",
                "--judgments",
                qrels.to_str().expect("utf-8"),
                "--run",
                &spec,
                "--out",
                out.to_str().expect("utf-8"),
            ],
        );
        assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
        outputs.push(std::fs::read_to_string(out.join("per-query.csv")).expect("per-query"));
    }
    assert_eq!(outputs[0], outputs[1]);
    assert!(outputs[0].lines().count() > 8, "{}", outputs[0]);

    let bad = crate::util::write(tmp.path(), "bad.txt", "q1 Q0 d1 1 2.5 t\nq1 Q0 d2 two 1.5 t\n");
    let spec = format!("a={}", bad.display());
    let res = crate::util::postassay(
        tmp.path(),
        &["score", "--judgments", qrels.to_str().expect("utf-8"), "--run", &spec, "--out", "o"],
    );
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains(&format!(
            "{}:2: field 4 (rank): expected an integer rank, found \"two\"",
            bad.display()
        )),
        "{stderr}"
    );
}
