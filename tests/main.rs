//! The one integration-test binary. Each module owns one area; `util` is the shared harness.

mod util;

mod check;
mod cli;
mod demo;
mod external_eseries;
mod external_ngspice;
mod external_ode;
mod find;
mod holds;
mod ledger;
mod pictures;
mod plan;
mod reach;
mod reorder;
mod safety;
mod sheet;
mod stock;
mod store_safety;
mod web;
mod web_browser;
