"""Services: room models -> engine inputs, engine results -> typed analysis; advice, planner, drawings, exports."""
