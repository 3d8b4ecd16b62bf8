//! Pure driver physics: each formula in one function, with its source.
