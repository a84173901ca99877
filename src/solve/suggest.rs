//! Advice when nothing in stock meets the target (to be filled in).
