SELECT weight_kg, arrived_late FROM parcels WHERE depot = 'BRS';
