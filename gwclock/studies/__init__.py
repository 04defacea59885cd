"""Questions asked of a mission: SNRs and schedules, horizons, stochastic backgrounds, trade
studies (sweeps, requirements) and the executors that run them."""

__all__: list[str] = []
