export { WorkloadScreen as default } from '../../components/features/workload/workload-screen';
