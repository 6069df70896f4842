//! Integration tests for clampwise live in `tests/tests/`: each file checks one area against a
//! source outside the project (named beside every check).
