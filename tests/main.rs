//! The integration tests: one binary, a module per topic. Each check against
//! an outside value names its source beside it.

mod helpers;

mod cli_draw;
mod data_csv;
mod estimate_cases;
mod estimate_frontdoor;
mod estimate_nhefs;
mod estimate_sim;
mod graph_parse;
mod model_fixtures;
