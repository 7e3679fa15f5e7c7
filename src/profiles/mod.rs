//! The machine and job profiles: YAML files read with located errors into
//! the model's `Machine` and `Job`.

pub mod job;
pub mod machine;
