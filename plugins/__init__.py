"""Built-in activity-model plugins, registered through the saltbench.plugins entry-point group."""
