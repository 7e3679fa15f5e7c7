//! The machine and job profiles and the shop's stock list: YAML files read
//! with located errors into the model's `Machine`, `Job` and `Block`s.

pub mod job;
pub mod machine;
pub mod stock;
