"""Phase diagrams: ternary isotherms, polytherms and projections."""
