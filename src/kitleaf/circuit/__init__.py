"""The circuit model: stages resolved by kind and chained into one circuit for the engine."""
