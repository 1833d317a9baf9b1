//! Sending one query's request with retries (input stage of `fetch`): a
//! per-request time limit, retries with exponential backoff on time-outs,
//! broken connections, 429 and 5xx answers, and the wait an answer's
//! `Retry-After` asks for (RFC 9110 §10.2.3: seconds or an HTTP date),
//! capped at [`MAX_RETRY_AFTER`]. Any other status fails at once.
//!
//! The HTTP client is ureq (blocking; HTTPS through rustls with the
//! webpki root certificates). Secrets from the template travel only in the
//! request headers: no message here prints a header.

use std::time::{Duration, Instant, SystemTime, UNIX_EPOCH};

use crate::fetch::hits::excerpt;
use crate::fetch::template::{FilledRequest, Method, Template};

/// Longest wait a `Retry-After` can impose before a retry.
pub const MAX_RETRY_AFTER: Duration = Duration::from_secs(60);

/// Largest response body read (bytes).
const BODY_LIMIT: u64 = 64 << 20;

/// How requests are timed and retried.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RetrySettings {
    /// Time limit of one request, from connecting to the end of the body.
    pub timeout: Duration,
    /// Attempts per query, the first included (≥ 1).
    pub tries: u32,
    /// Wait before the first retry; doubled for each further one.
    pub backoff: Duration,
}

/// Why an attempt is tried again.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum RetryCause {
    /// 429 Too Many Requests.
    TooManyRequests,
    /// A 5xx status.
    ServerError,
    /// The time limit passed.
    TimedOut,
    /// The connection failed or broke.
    Connection,
}

impl RetryCause {
    /// Short name for summaries.
    pub fn as_str(self) -> &'static str {
        match self {
            RetryCause::TooManyRequests => "429",
            RetryCause::ServerError => "5xx",
            RetryCause::TimedOut => "time-out",
            RetryCause::Connection => "connection",
        }
    }
}

/// A successful answer.
#[derive(Debug)]
pub struct Answer {
    /// The response body.
    pub body: String,
    /// Time of the successful attempt.
    pub latency: Duration,
}

/// The outcome of one attempt.
enum Attempt {
    Done(String),
    Retry { cause: RetryCause, detail: String, after: Option<Duration> },
    Fail(String),
}

/// An HTTP client for templates, shared by the worker threads.
#[derive(Debug, Clone)]
pub struct Client {
    agent: ureq::Agent,
    settings: RetrySettings,
}

impl Client {
    /// A client with these time limits and retries.
    pub fn new(settings: RetrySettings) -> Client {
        let config = ureq::Agent::config_builder()
            .timeout_global(Some(settings.timeout))
            .http_status_as_error(false)
            .user_agent(concat!("postassay/", env!("CARGO_PKG_VERSION")))
            .build();
        Client { agent: ureq::Agent::new_with_config(config), settings }
    }

    /// Send `request`, retrying as the settings say; `on_retry` hears of
    /// each retry (cause, detail, wait) before its wait. The error is the
    /// last failure in words (status or cause, tries, an excerpt).
    pub fn send(
        &self,
        template: &Template,
        request: &FilledRequest,
        on_retry: &mut dyn FnMut(RetryCause, &str, Duration),
    ) -> std::result::Result<Answer, String> {
        let tries = self.settings.tries.max(1);
        let mut backoff = self.settings.backoff;
        for attempt in 1..=tries {
            let start = Instant::now();
            match self.attempt(template, request) {
                Attempt::Done(body) => return Ok(Answer { body, latency: start.elapsed() }),
                Attempt::Fail(message) => return Err(message),
                Attempt::Retry { cause, detail, after } => {
                    if attempt == tries {
                        return Err(format!(
                            "{detail} ({})",
                            crate::plural::counted(tries as usize, "try", "tries")
                        ));
                    }
                    let wait = after.map_or(backoff, |a| a.min(MAX_RETRY_AFTER).max(backoff));
                    on_retry(cause, &detail, wait);
                    std::thread::sleep(wait);
                    backoff = backoff.saturating_mul(2);
                }
            }
        }
        Err("no attempt was made".into())
    }

    fn attempt(&self, template: &Template, request: &FilledRequest) -> Attempt {
        let has_type = template.headers.iter().any(|(n, _)| n.eq_ignore_ascii_case("content-type"));
        let result = match (template.method, &request.body) {
            (Method::Post, Some(body)) => {
                let mut builder = self.agent.post(&request.url);
                for (name, value) in &template.headers {
                    builder = builder.header(name, value.as_str());
                }
                if !has_type {
                    builder = builder.header("Content-Type", "application/json");
                }
                builder.send(body.as_str())
            }
            _ => {
                let mut builder = self.agent.get(&request.url);
                for (name, value) in &template.headers {
                    builder = builder.header(name, value.as_str());
                }
                builder.call()
            }
        };
        let mut response = match result {
            Ok(r) => r,
            Err(e) => return self.classify(e),
        };
        let status = response.status();
        let after = response
            .headers()
            .get("retry-after")
            .and_then(|v| v.to_str().ok())
            .and_then(|v| parse_retry_after(v, SystemTime::now()));
        let body = match response.body_mut().with_config().limit(BODY_LIMIT).read_to_string() {
            Ok(b) => b,
            Err(e) => return self.classify(e),
        };
        let code = status.as_u16();
        let described = format!(
            "HTTP status {code}{}",
            status.canonical_reason().map(|r| format!(" {r}")).unwrap_or_default()
        );
        if status.is_success() {
            Attempt::Done(body)
        } else if code == 429 || status.is_server_error() {
            let cause =
                if code == 429 { RetryCause::TooManyRequests } else { RetryCause::ServerError };
            Attempt::Retry { cause, detail: with_excerpt(&described, &body), after }
        } else {
            Attempt::Fail(with_excerpt(&described, &body))
        }
    }

    fn classify(&self, e: ureq::Error) -> Attempt {
        let limit = format!("timed out after {} s", self.settings.timeout.as_secs_f64());
        match e {
            ureq::Error::Timeout(_) => {
                Attempt::Retry { cause: RetryCause::TimedOut, detail: limit, after: None }
            }
            ureq::Error::Io(io)
                if matches!(
                    io.kind(),
                    std::io::ErrorKind::TimedOut | std::io::ErrorKind::WouldBlock
                ) =>
            {
                Attempt::Retry { cause: RetryCause::TimedOut, detail: limit, after: None }
            }
            // A TLS failure (rustls reports it as invalid data) will not
            // mend by trying again.
            ureq::Error::Io(io) if io.kind() == std::io::ErrorKind::InvalidData => {
                Attempt::Fail(format!("connection failed: {io}"))
            }
            ureq::Error::Io(_)
            | ureq::Error::ConnectionFailed
            | ureq::Error::HostNotFound
            | ureq::Error::Protocol(_) => Attempt::Retry {
                cause: RetryCause::Connection,
                detail: format!("connection failed: {e}"),
                after: None,
            },
            ureq::Error::BodyExceedsLimit(_) => {
                Attempt::Fail(format!("the answer is larger than {} MiB", BODY_LIMIT >> 20))
            }
            other => Attempt::Fail(format!("request failed: {other}")),
        }
    }
}

fn with_excerpt(what: &str, body: &str) -> String {
    let ex = excerpt(body);
    if ex.is_empty() {
        what.to_string()
    } else {
        format!("{what}: {ex}")
    }
}

/// A `Retry-After` value (RFC 9110 §10.2.3): delay seconds, or an HTTP date
/// in the preferred IMF-fixdate form (`Sun, 06 Nov 1994 08:49:37 GMT`),
/// whose wait is its distance from `now` (none once past).
pub fn parse_retry_after(value: &str, now: SystemTime) -> Option<Duration> {
    let value = value.trim();
    if !value.is_empty() && value.bytes().all(|b| b.is_ascii_digit()) {
        return value.parse::<u64>().ok().map(Duration::from_secs);
    }
    let at = UNIX_EPOCH + Duration::from_secs(imf_fixdate_seconds(value)?);
    Some(at.duration_since(now).unwrap_or(Duration::ZERO))
}

/// Seconds since 1970 of an IMF-fixdate.
fn imf_fixdate_seconds(value: &str) -> Option<u64> {
    let parts: Vec<&str> = value.split(' ').collect();
    let [_weekday, day, month, year, time, "GMT"] = parts.as_slice() else { return None };
    const MONTHS: [&str; 12] =
        ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"];
    let month = MONTHS.iter().position(|m| m == month)? as i64 + 1;
    let day: i64 = day.parse().ok()?;
    let year: i64 = year.parse().ok()?;
    let hms: Vec<i64> = time.split(':').map(|p| p.parse().ok()).collect::<Option<_>>()?;
    let [h, m, s] = hms.as_slice() else { return None };
    // Days from civil date (H. Hinnant's algorithm, public domain).
    let y = if month <= 2 { year - 1 } else { year };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = (month + 9) % 12;
    let doy = (153 * mp + 2) / 5 + day - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    let days = era * 146_097 + doe - 719_468;
    u64::try_from(days * 86_400 + h * 3600 + m * 60 + s).ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn retry_after_seconds_and_http_date() {
        let now = UNIX_EPOCH + Duration::from_secs(784_111_777); // 1994-11-06 08:49:37 UTC
        assert_eq!(parse_retry_after("120", now), Some(Duration::from_secs(120)));
        // RFC 9110 §5.6.7's example date is 784111777 s after the epoch
        // (the same instant in its three forms; `date -ud @784111777`).
        assert_eq!(parse_retry_after("Sun, 06 Nov 1994 08:49:37 GMT", now), Some(Duration::ZERO));
        assert_eq!(
            parse_retry_after("Sun, 06 Nov 1994 08:50:07 GMT", now),
            Some(Duration::from_secs(30))
        );
        assert_eq!(
            parse_retry_after("Tue, 01 Mar 2000 00:00:00 GMT", UNIX_EPOCH),
            Some(Duration::from_secs(951_868_800))
        );
        for bad in ["", "-1", "1.5", "soon", "Sunday, 06-Nov-94 08:49:37 GMT"] {
            assert_eq!(parse_retry_after(bad, now), None, "{bad}");
        }
    }
}
