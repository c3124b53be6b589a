//! The one integration-test binary: every black-box and reference test of steamcell, as one
//! module per file (one link instead of one per file, which is slow on two cores).
//!
//! Shared helpers: [`common`] starts the real `steamcell` binary and speaks raw HTTP;
//! [`reference`] reads the IAPWS check values in `tests/data/`. Run one file's tests with
//! `cargo test --test it <file>::`, e.g. `cargo test --test it state_pairs::`.

mod common;
mod reference;

mod addin_routes;
mod api;
mod api_props95;
mod bad_input;
mod balance;
mod balance_dof;
mod balance_losses;
mod columns_route;
mod demo_site;
mod deploy;
mod distribution;
mod e2e_server;
mod feasibility;
mod fuzz_like;
mod iapws_if97_r7_97_forward;
mod iapws_r12_08;
mod iapws_r14_08;
mod iapws_r15_11;
mod iapws_r1_76;
mod iapws_r6_95;
mod iapws_r7_97_backward;
mod iapws_sr2_01;
mod iapws_sr3_03;
mod iapws_sr4_04;
mod iapws_sr5_05;
mod if97_vs_iapws95;
mod impossible_requests;
mod load;
mod metrics;
mod packed_columns;
mod plant_components;
mod schema;
mod security;
mod site_route;
mod solver_edges;
mod state95_pairs;
mod state_pairs;
mod sweep_units;
mod textbook_cogeneration;
mod textbook_rankine;
mod tidy;
mod tls;
mod tokens;
mod transports;
mod turbines_cycles;
mod uncertainty;
mod units_choice;
mod validation_record;
