/** Calibration jobs and uploads authorize through the one guard module; re-exported here for their routes. */
export { inTeam, UUID } from '../guard.js';
