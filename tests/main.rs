//! The integration tests: one binary, a module per topic. Each check against
//! an outside value names its source beside it.

mod helpers;

mod bootstrap;
mod cli_draw;
mod cli_identify;
mod graph_parse;
mod graph_props;
mod identify_dsep;
mod identify_props;
mod identify_textbook;
mod sensitivity;
mod simulate;
