//! loadfit: the needs of a transistor switching stage, and the parts of a library that meet them.
//!
//! This library holds every computation and has no terminal I/O; the binary's `cli` and `tui`
//! modules are thin shells over it. Data flows one way: CSV files become a [`library::Library`],
//! a stage file becomes a stage, the stage gives needs, and needs held against parts give checks.

#![forbid(unsafe_code)]

pub mod export;
pub mod fit;
pub mod library;
pub mod needs;
pub mod stage;
pub mod swap;
pub mod synthetic;
pub mod text;
pub mod trace;
pub mod tui;
pub mod units;
pub mod write;
