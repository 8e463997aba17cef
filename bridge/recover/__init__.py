"""Recovery runs: resultant sources, cases, blocks of cells, serial or distributed, into the results store."""
