//! Typed library errors.
