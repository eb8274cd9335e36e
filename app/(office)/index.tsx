export { StartRedirect as default } from '../../components/features/nav/start-redirect';
