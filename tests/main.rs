//! The integration tests: one binary, a module per topic. Each check against
//! an outside value names its source beside it.

mod helpers;

mod bootstrap;
mod check_ci;
mod check_implications;
mod check_sim;
mod cli_check;
mod cli_compare;
mod cli_draw;
mod cli_estimate;
mod cli_help;
mod cli_identify;
mod data_csv;
mod estimate_bootstrap;
mod estimate_cases;
mod estimate_cluster;
mod estimate_exposures;
mod estimate_frontdoor;
mod estimate_nhefs;
mod estimate_sim;
mod estimate_survival;
mod estimate_weights;
mod fuzz_pipeline;
mod graph_parse;
mod graph_props;
mod identify_dsep;
mod identify_props;
mod identify_textbook;
mod library_words;
mod model_fixtures;
mod report_curve;
mod robust_data;
mod robust_first_hour;
mod robust_flags;
mod robust_graph;
mod robust_inputs;
mod robust_names;
mod robust_options;
mod robust_props;
mod robust_units;
mod sensitivity;
mod simulate;
