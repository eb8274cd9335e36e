export { BatchesScreen as default } from '../../../components/features/batches/batches-screen';
