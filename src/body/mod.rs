//! Stage 3, the body model: landmarks in our vocabulary, joint centers and segment endpoints.

pub mod vocabulary;
