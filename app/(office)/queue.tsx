export { QueueScreen as default } from '../../components/features/cases/queue-screen';
