/**
 * The review page with the batch's calibration below the table: composed here, at the app level, so features never import each other (flow app →
 * features → shared). The router loads it lazily like any page.
 */
import { CalibrationPanel } from '../../features/calibration/components/CalibrationPanel';
import { BatchReviewPage } from '../../features/review/routes/BatchReviewPage';

export function BatchReviewWithCalibration() {
  return <BatchReviewPage calibration={(batchId) => <CalibrationPanel batchId={batchId} />} />;
}
