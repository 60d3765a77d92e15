//! Human units: durations, rates and shares.
