//! The machine and job profiles and the shop's stock list: YAML files read
//! with located errors into the model's `Machine`, `Job` and `Block`s.

pub mod values;
pub mod machine;
pub mod job;
pub mod stock;
