export { BatchScreen as default } from '../../../components/features/batches/batch-screen';
