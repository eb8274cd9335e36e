export { SignInScreen as default } from '../components/features/auth/sign-in-screen';
