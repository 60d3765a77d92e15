//! Probability laws for holding times, inter-arrival times, patience and redial
//! delays, built from mean and cv (or shape); empirical laws from data.
