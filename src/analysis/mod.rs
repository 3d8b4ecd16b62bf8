//! Pure analysis: the model of a revision, its flags, run analysis and trends.
