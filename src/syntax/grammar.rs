//! The grammar (`grammar/catena.pest`) compiled by pest into its parser
//! and its `Rule` enum: below both the lowering (`parser`) and the words
//! for a parse error (`expected`), so neither reaches into the other.

#[derive(pest_derive::Parser)]
#[grammar = "../grammar/catena.pest"]
pub(super) struct CatenaParser;
