"""Process paths: evaporation, cooling and heating, mixing, dissolution, pond trains."""
