//! Statistics helpers: distributions, intervals for proportions, rank tests, power, the
//! chi-square test, the group bootstrap and small sample summaries.

pub mod bootstrap;
pub mod chisq;
pub mod dist;
pub mod error;
pub mod power;
pub mod proportion;
pub mod rank;
pub mod summary;

pub use bootstrap::{BootstrapInterval, BootstrapParams, percentile_bootstrap};
pub use chisq::{ChiSquareTest, chi_square_homogeneity};
pub use dist::{
    chi_square_sf, ln_gamma, normal_cdf, normal_quantile, normal_sf, regularized_gamma_p,
    regularized_gamma_q,
};
pub use error::StatsError;
pub use power::{PowerParams, two_proportion_power, two_proportion_sample_size};
pub use proportion::{Interval, newcombe_difference_interval, wilson_interval};
pub use rank::{
    Alternative, HodgesLehmann, MannWhitney, MannWhitneyParams, PValueMethod, hodges_lehmann,
    mann_whitney_u,
};
pub use summary::{mean, median, quantile, quantile_of_sorted, std_dev, variance};
