/** Shapes of the intake API, from the generated document types (src/lib/api/types.ts). Source identifiers stay text end to end. */
export type {
  Batch,
  BatchCounts,
  BatchRow,
  BatchState,
  ColumnMapping,
  DerivedValues,
  FieldProblem,
  Instrument,
  IntakeColumn,
  IntakeColumnsResponse,
  MappingProposal,
  RowState,
} from '../../lib/api/types';
