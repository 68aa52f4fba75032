"""From budgets to a decision: the forecast, the recommendation and the reflector sweep."""
