//! Statistics: pure functions on numbers. No I/O, no formatting, no Markdown.

pub mod assumptions;
pub mod chi_scale;
pub mod compare;
pub mod dist;
pub mod dunnett;
pub mod effect;
pub mod letters;
pub mod oneway;
pub mod ptukey;
pub mod quadrature;
pub mod ranks;
pub mod roots;
pub mod special;
pub mod sum;
pub mod welch;
