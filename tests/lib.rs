//! Shared helpers of the integration tests (kept empty until needed).
