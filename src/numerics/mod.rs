//! Numerical kernels below every stage: weighted linear least squares ([`linear`]), nonlinear
//! least squares ([`nonlinear`]), both solved by one QR ([`GivensQr`]), the bracketed root finder ([`brent_root`]) and the information
//! criterion model choices use ([`aicc`]). Nothing here knows about polymers.

mod information;
pub mod linear;
pub mod nonlinear;
mod qr;
mod roots;

pub use information::aicc;
pub use qr::GivensQr;
pub use roots::brent_root;
