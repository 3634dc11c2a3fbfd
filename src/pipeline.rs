//! (filled by its stage's issue)
