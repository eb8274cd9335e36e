export { StatusScreen as default } from '../../components/features/status/status-screen';
