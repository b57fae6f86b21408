"""Jobs: pure functions over the store and the engine that answer one user question each."""
