//! Shared text-file helpers for the readers (BOM, CRLF, CSV headers).
