"""Site assessment: design knowledge, site updating and member reliability, before and after."""
