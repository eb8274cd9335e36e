export { AboutScreen as default } from '../../components/features/about/about-screen';
