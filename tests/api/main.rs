//! One integration-test binary (cheap to link), one module per area.
//! Every test starts its own service on a fresh temporary database and talks
//! to it over real HTTP.

mod helpers;

mod athletes;
mod basics;
mod board;
mod durability;
mod faults;
mod integrator;
mod malformed;
mod openapi_doc;
mod participation;
mod plans;
mod privacy;
mod security;
mod serving;
mod sessions;
mod teams;
mod versions;
