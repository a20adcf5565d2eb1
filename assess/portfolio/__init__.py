"""A portfolio of structures: many sites on a Dask cluster, one ranking of where to act first.

Modules, one purpose each:

- `portfolio_file`: the portfolio (a folder of site folders, or a ``portfolio.toml``);
- `hashing`: the content hash that decides whether a site must run again;
- `record`: the portfolio's append-only record of site runs (JSON lines);
- `site_job`: the one adapter to the single-site main job (`run_one_site`);
- `tasks`: the task that runs one site and returns plain data;
- `cluster`: a local Dask cluster, or a client of an existing one;
- `runner`: skip, submit, collect, record, summarise (`run_portfolio`);
- `ranking`: the urgency rule; `summary`: the rows; `report`: the page.
"""

from assess.portfolio.portfolio_file import Portfolio, SiteEntry, load_portfolio
from assess.portfolio.ranking import RULE, rank_sites
from assess.portfolio.runner import PortfolioRun, Progress, run_portfolio

__all__ = [
           "RULE",
           "Portfolio",
           "PortfolioRun",
           "Progress",
           "SiteEntry",
           "load_portfolio",
           "rank_sites",
           "run_portfolio",
]
