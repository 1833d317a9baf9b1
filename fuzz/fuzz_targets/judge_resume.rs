//! Fuzz the reader `judge` uses to resume a judgments file (it accepts a
//! header alone, and names a torn last line), then open it for appending,
//! append a grade and take it back: the file must read as before.
#![no_main]
use libfuzzer_sys::fuzz_target;
use postassay::ids::{PostId, QueryId};
use postassay::judge::{read_judgments_allow_empty, JudgmentsAppender};
use postassay_fuzz::{check_error, input_file};

fuzz_target!(|data: &[u8]| {
    let path = input_file("judged.csv", b"", data);
    let read = read_judgments_allow_empty(&path);
    check_error(&read);
    let Ok((before, _)) = read else { return };
    let opened = JudgmentsAppender::open(&path);
    check_error(&opened);
    let Ok((mut appender, judged)) = opened else { return };
    if !data.is_empty() {
        assert_eq!(judged, before, "open reads what the resume reader read");
    }
    let appended = appender.append(&QueryId::from("fq"), &PostId::from("fd"), 2);
    check_error(&appended);
    if let Ok(appended) = appended {
        let after = read_judgments_allow_empty(&path);
        assert!(after.is_ok(), "an appended grade breaks the file: {:?}", after.err());
        assert!(appender.retract(&appended).expect("retracting"), "own line not retracted");
        let again = read_judgments_allow_empty(&path).map(|(j, _)| j);
        assert_eq!(again.ok().as_ref(), Some(&judged), "undo restores the judgments");
    }
});
