export { calibrationRoutes } from './routes.js';
export { calibrationService, type CalibrationService } from './service.js';
export { plausibilityService, type PlausibilityService } from './plausibility.js';
