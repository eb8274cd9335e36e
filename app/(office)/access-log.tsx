export { AccessLogScreen as default } from '../../components/features/access-log/access-log-screen';
