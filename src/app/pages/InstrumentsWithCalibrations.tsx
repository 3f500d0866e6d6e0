/**
 * The instrument registry with each instrument's calibrations: composed here, at the app level, so features never import each other (flow app →
 * features → shared). The router loads it lazily like any page.
 */
import { InstrumentCalibrations } from '../../features/calibration/components/InstrumentCalibrations';
import { InstrumentsPage } from '../../features/instruments/routes/InstrumentsPage';

export function InstrumentsWithCalibrations() {
  return <InstrumentsPage calibrations={(code) => <InstrumentCalibrations code={code} />} />;
}
