"""The prover: preprocessing, a fast exact kernel, the covering procedure and certificate emission."""
