//! refs
